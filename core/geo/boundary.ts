import { angleOfChord, chordOfAngle, EARTH_MEAN_RADIUS_M, RAD, unitVector } from './distance.ts';
import { nearestChord2, pointsWithin } from './kd-tree.ts';
import type { SitePoints } from './site-points.ts';

/**
 * Which sites are nearest somewhere on one piece of a cell boundary.
 *
 * A segment is part of a meridian (great-circle arc; `fixed` is its longitude, `from`..`to` its
 * latitudes) or of a parallel (small circle; `fixed` is its latitude, `from`..`to` longitudes),
 * in degrees with from <= to.
 *
 * Method (adaptive bisection). For a piece with midpoint q and half-length h measured along the
 * piece (the great-circle distance between two of its points is at most their distance along it),
 * S(q) = { s : d(q, s) <= d_nearest(q) + 2h } holds the nearest site of every point p of the
 * piece: d(q, s*) <= d(p, s*) + h <= d(p, n_q) + h <= d(q, n_q) + 2h (triangle inequality).
 *   |S| = 1: that site is the only nearest site on the piece.
 *   Otherwise, when S is small (at most PRUNE_LIMIT), drop every site that another site of S
 *     beats all along the piece: a is no farther than b at p iff (a - b) . p >= 0, and along either
 *     kind of segment (a - b) . p(t) = alpha cos t + beta sin t + gamma, whose maximum lies at an
 *     end or where tan t = beta / alpha. If at most two sites survive, they are exactly the
 *     nearest sites on the piece (with two, each beats the other somewhere, so each is nearest
 *     somewhere).
 *   Also stop, accepting all survivors, when they sit in at most two spots of 0.5 m (sites that
 *     close are told apart by dot products only near them, so splitting far away would run to
 *     the stop length all along the piece).
 *   Else split in halves, until h < STOP_HALF_LENGTH_M; then all surviving sites are accepted.
 * Tolerances (SLACK_M on distances, DOT_TOLERANCE on dot products) only ever add candidates, so
 * floating-point rounding cannot drop a true one. Output: location indices, added to `out`.
 */
export interface Segment {
  readonly meridian: boolean;
  readonly fixed: number;
  readonly from: number;
  readonly to: number;
}

export const STOP_HALF_LENGTH_M = 0.5;
const STOP_SHARE_OF_DISTANCE = 1e-5;
const SLACK_M = 0.01;
const DOT_TOLERANCE = 1e-12;
const PRUNE_LIMIT = 48;
/** Most sites fetched for one piece before it is split instead (far pieces see whole clusters). */
const FETCH_LIMIT = 4096;
const NEAR_ANTIPODE_RAD = 3;
/** Below this half-length a piece fetches all of S, so crowds of near-coincident sites end. */
const FETCH_ALL_HALF_LENGTH_M = 1000;
/** Sites closer than this (below the 1.19 m coordinate step) count as one spot. */
const SPOT_CHORD = 0.5 / EARTH_MEAN_RADIUS_M;

export function segmentLocations(points: SitePoints, seg: Segment, out: Set<number>): void {
  resolve(points, seg, seg.from, seg.to, out, []);
}

function halfLengthM(seg: Segment, a: number, b: number): number {
  const arc = ((b - a) * RAD) / 2;
  return EARTH_MEAN_RADIUS_M * arc * (seg.meridian ? 1 : Math.abs(Math.cos(seg.fixed * RAD)));
}

function resolve(points: SitePoints, seg: Segment, a: number, b: number, out: Set<number>, found: number[]): void {
  const mid = (a + b) / 2;
  const [x, y, z] = seg.meridian ? unitVector(mid, seg.fixed) : unitVector(seg.fixed, mid);
  const half = halfLengthM(seg, a, b);
  const nearest = angleOfChord(Math.sqrt(nearestChord2(points.tree, x, y, z)));
  // Near the antipode a chord resolves angles only to about 1e-8 rad: widen the slack there.
  const slack = SLACK_M / EARTH_MEAN_RADIUS_M + (nearest > NEAR_ANTIPODE_RAD ? 1e-6 : 0);
  const reach = chordOfAngle(nearest + (2 * half) / EARTH_MEAN_RADIUS_M + slack);
  // Stop below 0.5 m, or below 1e-5 of the distance to the nearest site: far from every site,
  // accepting S a little early only lengthens a list (S always holds the nearest sites).
  const last = half < STOP_HALF_LENGTH_M || half < STOP_SHARE_OF_DISTANCE * nearest * EARTH_MEAN_RADIUS_M;
  found.length = 0;
  const limit = last || half < FETCH_ALL_HALF_LENGTH_M ? Infinity : FETCH_LIMIT;
  pointsWithin(points.tree, x, y, z, reach * reach, found, limit);
  // With a limit, more than `limit` found means S was cut short: never accept a cut set.
  const complete = found.length <= limit;
  const near = complete ? beatingSomewhere(points, found, x, y, z, half / EARTH_MEAN_RADIUS_M + slack) : found;
  const live = near.length <= PRUNE_LIMIT ? undominated(points, seg, a, b, near) : near;
  if (complete && (live.length <= 2 || last || atMostTwoSpots(points, live))) {
    for (const k of live) out.add(k);
  } else {
    resolve(points, seg, a, mid, out, found);
    resolve(points, seg, mid, b, out, found);
  }
}

/**
 * The sites of S that can beat q's nearest site n somewhere on the piece. Site t is no nearer
 * than n at point p exactly when (t - n) . p <= 0, and along the piece (t - n) . p moves from its
 * value at q by at most |t - n| |p - q| <= |t - n| * angle (chord <= arc). Far from the sites,
 * |t - n| is small next to the 2h of the distance bound, so this keeps a handful of sites where
 * S holds hundreds. n is the nearest of S, which holds every site within reach of q.
 */
function beatingSomewhere(points: SitePoints, set: readonly number[], x: number, y: number, z: number, angle: number): number[] {
  const v = points.xyz;
  let n = set[0]!;
  let best = -Infinity;
  for (const k of set) {
    const dot = v[3 * k]! * x + v[3 * k + 1]! * y + v[3 * k + 2]! * z;
    if (dot > best) {
      best = dot;
      n = k;
    }
  }
  return set.filter((t) => {
    const dx = v[3 * t]! - v[3 * n]!;
    const dy = v[3 * t + 1]! - v[3 * n + 1]!;
    const dz = v[3 * t + 2]! - v[3 * n + 2]!;
    return dx * x + dy * y + dz * z + Math.hypot(dx, dy, dz) * angle >= -DOT_TOLERANCE;
  });
}

/**
 * True when the sites fall within two spots of chord SPOT_CHORD (0.5 m). Accepting all of a set
 * is always sound (the set holds every nearest site of the piece), only less tight, and sites
 * that close are all but tied wherever they matter.
 */
function atMostTwoSpots(points: SitePoints, set: readonly number[]): boolean {
  const v = points.xyz;
  const spots: number[] = [];
  for (const k of set) {
    const near = spots.some((s) => Math.hypot(v[3 * k]! - v[3 * s]!, v[3 * k + 1]! - v[3 * s + 1]!, v[3 * k + 2]! - v[3 * s + 2]!) <= SPOT_CHORD);
    if (near) continue;
    if (spots.length === 2) return false;
    spots.push(k);
  }
  return true;
}

/**
 * Drops every site that some other site of the set beats (strictly, beyond DOT_TOLERANCE) all
 * along [a, b]: it is nearest nowhere there. With two sites left this is the exact answer.
 */
function undominated(points: SitePoints, seg: Segment, a: number, b: number, set: readonly number[]): number[] {
  if (set.length < 2) return set.slice();
  return set.filter((s) => set.every((u) => u === s || maxAdvantage(points, seg, a, b, s, u) >= -DOT_TOLERANCE));
}

/**
 * Largest value over [a, b] of (P - Q) . p, the amount by which location P is nearer than Q
 * (in dot product, which grows as distance shrinks). Along either kind of segment it is
 * alpha cos t + beta sin t + gamma; its maximum is at an end or at t = atan2(beta, alpha).
 */
function maxAdvantage(points: SitePoints, seg: Segment, a: number, b: number, p: number, q: number): number {
  const v = points.xyz;
  const dx = v[3 * p]! - v[3 * q]!;
  const dy = v[3 * p + 1]! - v[3 * q + 1]!;
  const dz = v[3 * p + 2]! - v[3 * q + 2]!;
  const fixed = seg.fixed * RAD;
  let alpha: number;
  let beta: number;
  let gamma: number;
  if (seg.meridian) {
    // p(t) = (cos t cos L, cos t sin L, sin t), t = latitude.
    alpha = dx * Math.cos(fixed) + dy * Math.sin(fixed);
    beta = dz;
    gamma = 0;
  } else {
    // p(t) = (cos F cos t, cos F sin t, sin F), t = longitude.
    alpha = dx * Math.cos(fixed);
    beta = dy * Math.cos(fixed);
    gamma = dz * Math.sin(fixed);
  }
  const t0 = a * RAD;
  const t1 = b * RAD;
  const peak = Math.atan2(beta, alpha);
  if (within(peak, t0, t1)) return Math.hypot(alpha, beta) + gamma;
  return Math.max(alpha * Math.cos(t0) + beta * Math.sin(t0), alpha * Math.cos(t1) + beta * Math.sin(t1)) + gamma;
}

/** True when some angle c + 2 pi k lies in [t0, t1]. */
function within(c: number, t0: number, t1: number): boolean {
  const k = Math.ceil((t0 - c) / (2 * Math.PI));
  return c + 2 * Math.PI * k <= t1;
}
