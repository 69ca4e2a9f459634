import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../server/config';

describe('configuration checked at boot', () => {
  it('uses port 3000 and ./data when nothing is set', () => {
    const c = loadConfig({});
    expect(c.PORT).toBe(3000);
    expect(c.dataDir).toMatch(/\/data$/);
  });

  it('stops with the name of a bad variable and what is wrong with it', () => {
    expect(() => loadConfig({ PORT: 'eighty' })).toThrow(ConfigError);
    expect(() => loadConfig({ PORT: 'eighty' })).toThrow(/PORT: /);
    expect(() => loadConfig({ SESSION_SECRET: 'short' })).toThrow(/SESSION_SECRET: must be at least 32 characters/);
    expect(() => loadConfig({ SMTP_URL: 'not a url' })).toThrow(/SMTP_URL/);
  });

  it('refuses several web server processes on the embedded database, which belongs to one process', () => {
    expect(() => loadConfig({ WEB_PROCESSES: '2' })).toThrow(/WEB_PROCESSES: above 1 needs DATABASE_URL/);
    expect(loadConfig({ WEB_PROCESSES: '2', DATABASE_URL: 'postgres://u@localhost/db' }).WEB_PROCESSES).toBe(2);
  });
});
