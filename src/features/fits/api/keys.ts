/** Query keys of the fit screens, under the analysis's own key so an analysis change can drop them all. */
export const fitKeys = {
  versions: (slug: string) => ['analyses', slug, 'versions'] as const,
  fits: (slug: string) => ['analyses', slug, 'fits'] as const,
  fit: (slug: string, id: number) => ['analyses', slug, 'fits', id] as const,
  part: (slug: string, id: number, part: string) => ['analyses', slug, 'fits', id, 'parts', part] as const,
  comparison: (slug: string, id: number, otherId: number) => ['analyses', slug, 'fits', id, 'compare', otherId] as const,
};
