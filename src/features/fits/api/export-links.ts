import type { ExportTable } from '@shared/schemas/fits';
import { analysisPath } from '../../../lib/api-client';

/** The downloads of a fit result: the whole result as JSON, and each table as CSV. */
export function exportJsonUrl(slug: string, id: number): string {
  return `${analysisPath(slug, 'fits', id, 'export')}?format=json`;
}

export function exportCsvUrl(slug: string, id: number, table: ExportTable): string {
  return `${analysisPath(slug, 'fits', id, 'export')}?format=csv&table=${table}`;
}

/** The same table as a LaTeX `table` environment with its caption and label. */
export function exportLatexUrl(slug: string, id: number, table: ExportTable): string {
  return `${analysisPath(slug, 'fits', id, 'export')}?format=latex&table=${table}`;
}

export const EXPORT_TABLES: { table: ExportTable; label: string; title: string }[] = [
  { table: 'summary', label: 'Summary', title: 'μ̂, its errors, significance, limit and goodness of fit, one quantity per row' },
  { table: 'parameters', label: 'Parameters', title: 'Every fitted parameter: best-fit value, σ, held or at a bound' },
  { table: 'nuisance', label: 'Nuisance parameters', title: 'Pull, constraint, normalised pull and impacts of every nuisance parameter' },
  { table: 'groups', label: 'Groups', title: 'Grouped impacts on μ̂' },
  { table: 'correlation', label: 'Correlation', title: 'The post-fit correlation matrix' },
  { table: 'yields', label: 'Yields', title: 'Pre- and post-fit yields per region and process, summed over bins, with errors' },
  { table: 'systematics', label: 'Systematics', title: 'Each register entry with its group and the range of its effect per region, in percent' },
  { table: 'pulls', label: 'Pulls', title: 'Pulls, constraints and post-fit impacts on μ, ranked' },
];
