import type { FitOptionsInput } from '@shared/schemas/fit';
import type { Decorrelation } from '@shared/schemas/variants';

/**
 * The variant part of the start-fit form as typed (docs/likelihood.md §9), and its translation
 * into the API's fit options. Only what cannot be sent at all (a held value that is not a number)
 * is refused here; every other refusal is the server's, shown next to its field.
 */
export type HeldDraft = { parameter: string; at: 'best' | 'value'; value: string };
export type VariantDraft = {
  hold: HeldDraft[];
  holdGroup: string;
  statOnly: boolean;
  templateStats: boolean;
  decorrelate: Decorrelation[];
  expectedFrom: 'prefit' | 'control' | 'background';
  hiddenMu: boolean;
  breakdown: boolean;
  excludeRegions: string[];
};

export const emptyVariant: VariantDraft = {
  hold: [],
  holdGroup: '',
  statOnly: false,
  templateStats: true,
  decorrelate: [],
  expectedFrom: 'prefit',
  hiddenMu: false,
  breakdown: false,
  excludeRegions: [],
};

type VariantOptions = Pick<FitOptionsInput, 'hold' | 'holdGroups' | 'statOnly' | 'templateStats' | 'decorrelate' | 'expectedFrom' | 'hiddenMu' | 'breakdown' | 'excludeRegions'>;

/** Local problems by their API path (`hold.0.value`), as the server would name them. */
export type DraftProblems = Record<string, string>;

export function variantOptions(d: VariantDraft): { options: VariantOptions; problems: DraftProblems } {
  const problems: DraftProblems = {};
  const hold = d.hold.map((h, i) => {
    const parameter = h.parameter.trim();
    if (!parameter) problems[`hold.${i}.parameter`] = 'Name the parameter to hold, or remove the row.';
    if (h.at === 'best') return { parameter, value: 'best' as const };
    const value = h.value.trim() === '' ? NaN : Number(h.value);
    if (!Number.isFinite(value)) problems[`hold.${i}.value`] = 'The held value must be a number.';
    return { parameter, value };
  });
  const decorrelate = d.decorrelate.map((x, i) => {
    const parameter = x.parameter.trim();
    if (!parameter) problems[`decorrelate.${i}.parameter`] = 'Name the systematic to split, or remove the row.';
    return { parameter, by: x.by };
  });
  return {
    options: {
      hold,
      holdGroups: d.holdGroup ? [d.holdGroup] : [],
      statOnly: d.statOnly,
      templateStats: d.templateStats,
      decorrelate,
      expectedFrom: d.expectedFrom,
      hiddenMu: d.hiddenMu,
      breakdown: d.breakdown,
      excludeRegions: d.excludeRegions,
    },
    problems,
  };
}
