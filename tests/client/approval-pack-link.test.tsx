// @vitest-environment happy-dom
import { afterEach, describe, expect, it } from 'vitest';
import { cleanup, render, screen, within } from '@testing-library/react';
import type { FitDetail } from '@shared/schemas/fits';
import { ExportLinks } from '../../src/features/fits/components/fit-header';
import { fitDetail } from './fit-fixtures';

afterEach(() => cleanup());

describe('the approval pack on a fit’s page', () => {
  it.each([
    ['a converged fit', fitDetail()],
    ['a failed fit', fitDetail({ state: 'failed', failure: 'the Hessian is singular', result: { ...fitDetail().result!, status: 'failed', summary: null, parameters: [], nuisance: [] } })],
  ])('links %s to its pack as a page and as a zip', (_what, fit) => {
    render(<ExportLinks slug="demo-analysis" fit={fit as unknown as FitDetail} />);
    const nav = screen.getByRole('navigation', { name: 'Downloads of this result' });
    expect(within(nav).getByRole('link', { name: 'Approval pack (HTML)' }).getAttribute('href')).toBe(`/api/analyses/demo-analysis/fits/${fit.id}/pack?format=html`);
    expect(within(nav).getByRole('link', { name: 'Approval pack (zip)' }).getAttribute('href')).toBe(`/api/analyses/demo-analysis/fits/${fit.id}/pack?format=zip`);
  });
});
