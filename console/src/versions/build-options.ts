import type { BuildOptions, VersionInfo } from '../api/nearveil.ts';

/** What a build takes: the layout asked for and the k nearest an app may ask for. */
export type BuildChoice = BuildOptions;

export const LAYOUT_LABELS: Readonly<Record<BuildChoice['layout'], string>> = {
  auto: 'automatic (cheapest)',
  adaptive: 'adaptive regions',
  grid: 'uniform grid',
  veiled: 'veiled (two rounds, nearest only)',
};

/** A built layout in words, after "was built": "with adaptive regions". */
export const BUILT_WITH: Readonly<Record<NonNullable<VersionInfo['layout']>, string>> = {
  adaptive: 'with adaptive regions',
  grid: 'on a uniform grid',
  veiled: 'veiled',
};

/**
 * The build form's starting point: what the active version was built with (the layout its build
 * asked for, else the one it got, and its k), so a rebuild serves what apps already rely on.
 * Without an active version: automatic layout, k = 1.
 */
export function defaultBuildChoice(active: VersionInfo | undefined): BuildChoice {
  if (!active) return { layout: 'auto', maxK: 1 };
  return { layout: active.requestedLayout ?? active.layout ?? 'auto', maxK: active.maxK ?? 1 };
}

/**
 * Why building or publishing for `k` would break apps, or null when it would not: apps may ask
 * the active version for up to its k, and a version built for fewer answers k_too_large.
 */
export function kDropWarning(k: number, active: VersionInfo | undefined): string | null {
  const activeK = active?.maxK ?? null;
  if (!active || activeK === null || k >= activeK) return null;
  const asked = activeK - k === 1 ? `${activeK}` : activeK - k === 2 ? `${k + 1} or ${activeK}` : `${k + 1} to ${activeK}`;
  return `v${active.version}, the active version, serves up to k = ${activeK}: once a version built for k = ${k} is active, apps asking for ${asked} nearest sites get the error k_too_large.`;
}

/** The session's choice per dataset: kept across builds, publishes and screens until the tab closes. */
export interface ChoiceStore {
  get(slug: string): BuildChoice | null;
  set(slug: string, choice: BuildChoice): void;
}

const LAYOUTS = Object.keys(LAYOUT_LABELS) as Array<BuildChoice['layout']>;

export function sessionChoiceStore(storage: Pick<Storage, 'getItem' | 'setItem'>): ChoiceStore {
  const key = (slug: string) => `nearveil.build.${slug}`;
  return {
    get(slug) {
      try {
        const saved = JSON.parse(storage.getItem(key(slug)) ?? 'null') as Partial<BuildChoice> | null;
        if (!saved || !LAYOUTS.includes(saved.layout as BuildChoice['layout']) || !Number.isInteger(saved.maxK)) return null;
        return { layout: saved.layout!, maxK: saved.maxK! };
      } catch {
        return null;
      }
    },
    set(slug, choice) {
      storage.setItem(key(slug), JSON.stringify(choice));
    },
  };
}
