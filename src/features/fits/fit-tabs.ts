/** The views of a fit result, in reading order; the id is the last segment of the URL. */
export const FIT_TABS = [
  {
    id: 'summary',
    label: 'Summary',
    future:
      'The fitted signal strength μ̂ with its asymmetric errors, the split into statistical and systematic parts, the significance, the goodness of fit and the convergence report of the minimiser.',
  },
  {
    id: 'pulls',
    label: 'Pulls',
    future: 'For every nuisance parameter, how far the data pulled it from its prior value and how much the data constrained it, with over-constrained parameters flagged.',
  },
  {
    id: 'impacts',
    label: 'Impact ranking',
    future: 'Nuisance parameters ranked by how much they move μ̂ when raised or lowered by their post-fit uncertainty, each row with its pull and constraint.',
  },
  {
    id: 'groups',
    label: 'Groups',
    future: 'The uncertainty on μ̂ attributed to each group of systematics, from refits with the group held fixed.',
  },
  {
    id: 'correlations',
    label: 'Correlations',
    future: 'The post-fit correlation matrix of all parameters, on a teal–white–plum scale from −1 to +1.',
  },
  {
    id: 'distributions',
    label: 'Distributions',
    future: 'Per region, the pre-fit and post-fit stacked expectation by process with the observed data and a ratio panel.',
  },
  {
    id: 'diagnostics',
    label: 'Diagnostics',
    future: "For one parameter: its information breakdown by region and bin, its variations against the data's statistical precision, and its likelihood scan.",
  },
] as const;

export type FitTabId = (typeof FIT_TABS)[number]['id'];

export function fitTab(id: string | undefined) {
  return FIT_TABS.find((t) => t.id === (id ?? 'summary'));
}
