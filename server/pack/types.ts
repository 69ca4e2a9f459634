import type { PlotLabels } from '@shared/schemas/api';
import type { FitResult } from '@shared/schemas/fit';
import type { FitSummary } from '@shared/schemas/fits';
import type { BlindingLog, QuestionDetail } from '@shared/schemas/review';

/**
 * Everything an approval pack shows, gathered by services/pack.service.ts under the blinding rule:
 * `result` is exactly the redacted result the fit's page reads (null for a fit without one), and
 * the model's regions and processes carry their names only, never counts.
 */
export type PackData = {
  generatedAt: string;
  generatedBy: string;
  analysis: { name: string; slug: string; blinding: string; plotLabels: PlotLabels };
  fit: FitSummary;
  version: {
    number: number;
    sha256: string;
    note: string;
    createdAt: string;
    forApproval: boolean;
    override: { reason: string; by: string; openItems: string[] } | null;
    /** the register as frozen in the version (null for versions frozen before it was kept) */
    register: { key: string; label: string; state: string; revision: number }[] | null;
  };
  regions: { key: string; label: string; observable: string; unit: string }[];
  processes: { key: string; label: string; colour: string | null }[];
  result: FitResult | null;
  /** the warnings each entry's effects carry now (not frozen with the version) */
  warnings: Map<string, { region: string; process: string; messages: string[] }[]>;
  questions: QuestionDetail[];
  blinding: BlindingLog;
};
