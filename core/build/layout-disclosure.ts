import type { Layout } from '../geo/manifest.ts';

/**
 * What each layout's public manifest tells anyone who holds it about where the sites are, in one
 * sentence (printed by `nearveil plan`; MANIFEST.md says the same at length). Every layout also
 * publishes the site count, the padded list length and totals (matrix shape and 1-bits).
 */
export const LAYOUT_DISCLOSURE: Record<Layout['kind'], string> = {
  grid: "the grid box (the sites' bounding box plus a margin) and the longest list; not where sites are inside it",
  kd: 'where sites are dense (the splits follow them) and the box around them to 0.1 degree, not where each one is',
  veiled:
    'a coarse grid over the whole-degree box around the sites, its shape set by the site count alone, and padded sizes and totals; ' +
    'the partitions inside the coarse cells stay in the partition matrix, fetched privately (a second round per query)',
};

/** The flag value that builds a layout of this kind. */
export const LAYOUT_FLAG: Record<Layout['kind'], 'grid' | 'adaptive' | 'veiled'> = { grid: 'grid', kd: 'adaptive', veiled: 'veiled' };
