/**
 * The cautions every answer carries (DESIGN.md "Cautions shown to users"), with stable codes an
 * app can switch on and words it can show as they are. Apps should show them next to results;
 * local rules (emergency numbers, how care services must be listed) come first.
 */
export const CAUTIONS = [
  { code: 'straight_line', text: 'Distances are straight-line (great-circle): the nearest site is not always the nearest by road or travel time.' },
  { code: 'may_be_out_of_date', text: 'Site data can be out of date: check with the site before travelling.' },
  { code: 'emergency', text: 'In an emergency, call the local emergency number.' },
  { code: 'network_privacy', text: 'Privacy covers the location inside a query, not the network address or the timing of a request.' },
] as const;

/** Added when the point lies far outside the area the sites cover (core/geo/coverage.ts). */
export const FAR_FROM_COVERAGE_CAUTION = {
  code: 'far_from_coverage',
  text: 'This point is far outside the area these sites cover: the nearest listed site may be very far, and closer services this list does not hold may exist.',
} as const;

export type CautionCode = (typeof CAUTIONS)[number]['code'] | typeof FAR_FROM_COVERAGE_CAUTION.code;
export interface Caution {
  readonly code: CautionCode;
  readonly text: string;
}

/** The cautions for one answer: the usual ones, and far_from_coverage first when it applies. */
export function cautionsFor(farFromCoverage: boolean): Caution[] {
  return farFromCoverage ? [FAR_FROM_COVERAGE_CAUTION, ...CAUTIONS] : [...CAUTIONS];
}
