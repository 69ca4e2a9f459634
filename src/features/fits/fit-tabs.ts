/** The views of a fit result, in reading order; the id is the last segment of the URL. */
export const FIT_TABS = [
  { id: 'summary', label: 'Summary', description: 'μ̂ with its asymmetric errors, the stat/syst split, significance, limit, goodness of fit and the convergence report.' },
  { id: 'pulls', label: 'Pulls', description: 'How far the data pulled every nuisance parameter from its prior, and how much they constrained it.' },
  { id: 'impacts', label: 'Impact ranking', description: 'Nuisance parameters ranked by how much they move μ̂ when raised or lowered.' },
  { id: 'groups', label: 'Groups', description: 'The uncertainty on μ̂ attributed to each group of systematics, and the statistical part.' },
  { id: 'correlations', label: 'Correlations', description: 'The post-fit correlation matrix, on a teal–white–plum scale from −1 to +1.' },
  { id: 'distributions', label: 'Distributions', description: 'Per region, the pre-fit and post-fit stacked expectation with the data and a ratio panel.' },
  { id: 'diagnostics', label: 'Diagnosis', description: "Why one parameter came out as it did: its numbers, where its information comes from, its variations against the data's precision, its scan and correlations; and the convergence report in full." },
  { id: 'toys', label: 'Pseudo-experiments', description: 'Datasets drawn from the model and fitted like the data: whether μ̂, its error, q0 and the pulls behave as the asymptotic formulas say.' },
  { id: 'compare', label: 'Compare', description: 'What changed against another fit of this analysis.' },
] as const;

export type FitTabId = (typeof FIT_TABS)[number]['id'];

export function fitTab(id: string | undefined) {
  return FIT_TABS.find((t) => t.id === (id ?? 'summary'));
}
