import { describe, expect, it } from 'vitest';
import { exchangeModelSchema } from '@shared/schemas/exchange';
import { demoScenario } from '../../../server/seed/scenario';

describe('the invented demo scenario', () => {
  it('is generated deterministically: two runs give the same document', () => {
    expect(JSON.stringify(demoScenario())).toBe(JSON.stringify(demoScenario()));
  });

  it('has one blinded and one unblinded analysis whose models pass the exchange-file schema', () => {
    const { analyses } = demoScenario();
    expect(analyses.map((a) => a.blinded).sort()).toEqual([false, true]);
    for (const a of analyses) {
      const parsed = exchangeModelSchema.safeParse(a.model);
      expect(parsed.error?.issues ?? []).toEqual([]);
    }
  });

  it('gives the blinded search about forty systematics in several groups, five or more backgrounds, and signal and control regions', () => {
    const search = demoScenario().analyses.find((a) => a.blinded)!;
    const model = exchangeModelSchema.parse(search.model);
    expect(model.systematics.length).toBe(40);
    expect(new Set(model.systematics.map((s) => s.group)).size).toBeGreaterThanOrEqual(5);
    expect(model.processes.filter((p) => p.kind === 'background').length).toBeGreaterThanOrEqual(5);
    expect(new Set(model.regions.map((r) => r.role))).toEqual(new Set(['signal', 'control', 'validation']));
    expect(Object.keys(search.entries).sort()).toEqual(model.systematics.map((s) => s.key).sort());
  });

  it('gives every role a person, and every register entry an owner who is a member', () => {
    const { analyses } = demoScenario();
    for (const a of analyses) {
      expect(new Set(a.members.map((m) => m.role))).toEqual(new Set(['convener', 'analyst', 'contact', 'reader']));
      const memberEmails = new Set(a.members.map((m) => m.email));
      for (const meta of Object.values(a.entries)) expect(memberEmails.has(meta.owner)).toBe(true);
    }
  });
});
