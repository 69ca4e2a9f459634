/**
 * Query keys of the pseudo-experiment screens, under the analysis's own key so an analysis change
 * can drop them all. A fit's runs sit under the fit; one run is reached by its own id, as the API does.
 */
export const toyKeys = {
  runs: (slug: string, fitId: number) => ['analyses', slug, 'fits', fitId, 'toys'] as const,
  run: (slug: string, toyId: number) => ['analyses', slug, 'toys', toyId] as const,
};
