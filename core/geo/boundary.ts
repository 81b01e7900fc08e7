import { angleOfChord, chordOfAngle, EARTH_MEAN_RADIUS_M, RAD, unitVector } from './distance.ts';
import { kthNearestChord2, MAX_RANK, pointsWithin } from './kd-tree.ts';
import type { SitePoints } from './site-points.ts';

/**
 * Which sites are among the k nearest somewhere on one piece of a cell boundary.
 *
 * A segment is part of a meridian (great-circle arc; `fixed` is its longitude, `from`..`to` its
 * latitudes) or of a parallel (small circle; `fixed` is its latitude, `from`..`to` longitudes),
 * in degrees with from <= to.
 *
 * "Needed" (order k): a site is needed at point p when fewer than k sites are strictly nearer to
 * p than it (sites sharing a place count one each). For k = 1 these are the nearest sites.
 *
 * Method (adaptive bisection). For a piece with midpoint q and half-length h measured along the
 * piece (the great-circle distance between two of its points is at most their distance along it),
 * with D_k(q) the k-th nearest distance, S(q) = { s : d(q, s) <= D_k(q) + 2h } holds every site
 * needed at any point p of the piece: if s is needed at p, d(p, s) <= D_k(p) <= D_k(q) + h, so
 * d(q, s) <= d(p, s) + h <= D_k(q) + 2h (triangle inequality). S comes from the kd-tree once;
 * each half then starts from what survived in its parent (a superset of what the half needs).
 * Given any superset G of the needed sites of a piece, three filters keep it a superset:
 *   - with N the nearest places of G at q holding at least k sites, drop t when every n in N is
 *     strictly nearer than t all along the piece ((t - n) . p < 0, bounded through |p - q|);
 *   - when G is small (at most PRUNE_LIMIT), drop t when places holding at least k sites are
 *     strictly nearer than t all along the piece: along either kind of segment
 *     (a - b) . p(t) = alpha cos t + beta sin t + gamma, whose maximum is at an end or at
 *     tan t = beta / alpha;
 *   - no filter drops a needed site, since a needed site has fewer than k strictly nearer sites.
 * Exactness test (then the survivors are exactly the needed sites). Lemma: if G holds every needed
 *   site, s is needed at p iff the sites of G strictly nearer than s at p are fewer than k (the
 *   nearest non-member strictly nearer than s would have k members strictly nearer than itself).
 *   So s is needed when the sites of G other than s number fewer than k, or when some u in G
 *   fails to beat s somewhere and the sites of G other than s and u number fewer than k.
 *   For k = 1 and two places, each beating the other somewhere: both are nearest somewhere.
 * Also stop, accepting all survivors, when they sit in at most k + 1 spots of 0.5 m (sites that
 *   close are told apart by dot products only near them, so splitting far away would run to
 *   the stop length all along the piece).
 * Else split in halves, until h < STOP_HALF_LENGTH_M; then all surviving sites are accepted.
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

/** One segment's work: the sites, the segment, its order k, and its trigonometry done once. */
interface Piece {
  readonly points: SitePoints;
  readonly seg: Segment;
  readonly k: number;
  readonly cosFixed: number;
  readonly sinFixed: number;
  readonly out: Set<number>;
}

/**
 * Adds to `out` every location holding a site needed (order k) somewhere on the segment.
 * `within`, when given, must hold every location needed somewhere on the segment (for instance
 * the list of a box containing it); the search then starts from it instead of the kd-tree.
 */
export function segmentLocations(points: SitePoints, seg: Segment, out: Set<number>, k = 1, within?: readonly number[]): void {
  if (!Number.isInteger(k) || k < 1 || k > MAX_RANK) throw new RangeError(`segmentLocations: expected k in 1..${MAX_RANK}, got ${k}`);
  const piece: Piece = { points, seg, k, cosFixed: Math.cos(seg.fixed * RAD), sinFixed: Math.sin(seg.fixed * RAD), out };
  resolve(piece, seg.from, seg.to, within ?? null);
}

function halfLengthM(p: Piece, a: number, b: number): number {
  const arc = ((b - a) * RAD) / 2;
  return EARTH_MEAN_RADIUS_M * arc * (p.seg.meridian ? 1 : Math.abs(p.cosFixed));
}

const fetched: number[] = [];

export const STATS = { calls: 0, fetches: 0, fetched: 0, near: 0, live: 0, prunes: 0, top: 0 };
function resolve(p: Piece, a: number, b: number, given: readonly number[] | null): void {
  STATS.calls++; if (a === p.seg.from && b === p.seg.to) STATS.top++;
  const { points, seg, k } = p;
  const mid = (a + b) / 2;
  const [x, y, z] = seg.meridian ? unitVector(mid, seg.fixed) : unitVector(seg.fixed, mid);
  const half = halfLengthM(p, a, b);
  let set: readonly number[];
  if (given === null) {
    // The k-th nearest place is no nearer than the k-th nearest site: a sound (larger) reach.
    const kth = angleOfChord(Math.sqrt(kthNearestChord2(points.tree, x, y, z, Math.min(k, points.tree.size))));
    // Near the antipode a chord resolves angles only to about 1e-8 rad: widen the slack there.
    const slack = SLACK_M / EARTH_MEAN_RADIUS_M + (kth > NEAR_ANTIPODE_RAD ? 1e-6 : 0);
    const reach = chordOfAngle(kth + (2 * half) / EARTH_MEAN_RADIUS_M + slack);
    const early = half < STOP_HALF_LENGTH_M || half < STOP_SHARE_OF_DISTANCE * kth * EARTH_MEAN_RADIUS_M;
    const limit = early || half < FETCH_ALL_HALF_LENGTH_M ? Infinity : FETCH_LIMIT;
    fetched.length = 0;
    pointsWithin(points.tree, x, y, z, reach * reach, fetched, limit);
    // With a limit, more than `limit` found means S was cut short: never filter a cut set.
    if (fetched.length > limit) {
      resolve(p, a, mid, null);
      resolve(p, mid, b, null);
      return;
    }
    set = fetched.slice(); STATS.fetches++; STATS.fetched += set.length;
  } else {
    set = given;
  }
  const { near, nearest } = beatingSomewhere(p, set, x, y, z, half / EARTH_MEAN_RADIUS_M);
  // Stop below 0.5 m, or below 1e-5 of the distance to the nearest site: far from every site,
  // accepting a superset a little early only lengthens a list.
  const last = half < STOP_HALF_LENGTH_M || half < STOP_SHARE_OF_DISTANCE * nearest * EARTH_MEAN_RADIUS_M;
  if (near.length > PRUNE_LIMIT) {
    if (last) for (const s of near) p.out.add(s);
    else {
      resolve(p, a, mid, near);
      resolve(p, mid, b, near);
    }
    return;
  }
  const { live, exact } = prune(p, a, b, near, x, y, z); STATS.prunes++; STATS.near += near.length; STATS.live += live.length;
  if (exact || last || (live.length <= k + WITNESS_EXTRA && everyOneWitnessed(p, a, b, live)) || atMostSpots(points, live, k + 1)) {
    for (const s of live) p.out.add(s);
  } else {
    resolve(p, a, mid, live);
    resolve(p, mid, b, live);
  }
}

/**
 * Drops the sites of `set` that the nearest places at q (holding at least k sites) all beat
 * strictly everywhere on the piece. Place t is no nearer than n at point p exactly when
 * (t - n) . p <= 0, and along the piece (t - n) . p moves from its value at q by at most
 * |t - n| |p - q| <= |t - n| * angle (chord <= arc). Far from the sites, |t - n| is small next
 * to the 2h of the distance bound, so this keeps a handful of sites where S holds hundreds.
 * `angle` bounds the angle from q to any point of the piece. Also returns the angle from q to
 * its nearest place of the set.
 */
function beatingSomewhere(p: Piece, set: readonly number[], x: number, y: number, z: number, angle: number): { near: number[]; nearest: number } {
  const v = p.points.xyz;
  const sitesAt = p.points.sitesAt;
  const m = set.length;
  const dots = scratch(m);
  for (let i = 0; i < m; i++) {
    const s = set[i]!;
    dots[i] = v[3 * s]! * x + v[3 * s + 1]! * y + v[3 * s + 2]! * z;
  }
  // The nearest places (largest dot products) until they hold k sites: k picks at most.
  chosen.length = 0;
  let held = 0;
  while (held < p.k && chosen.length < m) {
    let best = -1;
    for (let i = 0; i < m; i++) if ((best < 0 || dots[i]! > dots[best]!) && !chosen.includes(i)) best = i;
    chosen.push(best);
    held += sitesAt[set[best]!]!.length;
  }
  const nearest = Math.acos(Math.max(-1, Math.min(1, dots[chosen[0]!]!)));
  if (held < p.k) return { near: set.slice(), nearest };
  // Near the antipode a chord resolves angles only to about 1e-8 rad: widen the slack there.
  const reach = angle + SLACK_M / EARTH_MEAN_RADIUS_M + (nearest > NEAR_ANTIPODE_RAD ? 1e-6 : 0);
  const near: number[] = [];
  for (let i = 0; i < m; i++) {
    const t = set[i]!;
    let keep = chosen.includes(i);
    for (let c = 0; c < chosen.length && !keep; c++) {
      const n = set[chosen[c]!]!;
      const dx = v[3 * t]! - v[3 * n]!;
      const dy = v[3 * t + 1]! - v[3 * n + 1]!;
      const dz = v[3 * t + 2]! - v[3 * n + 2]!;
      // (t - n) . q is dots[i] - dots[chosen]; computed directly for accuracy.
      keep = dx * x + dy * y + dz * z + Math.sqrt(dx * dx + dy * dy + dz * dz) * reach >= -DOT_TOLERANCE;
    }
    if (keep) near.push(t);
  }
  return { near, nearest };
}

const chosen: number[] = [];
let scratchDots = new Float64Array(1024);
/** A shared buffer of at least m numbers (used before any recursion, so never by two calls at once). */
function scratch(m: number): Float64Array {
  if (scratchDots.length < m) scratchDots = new Float64Array(2 * m);
  return scratchDots;
}

/**
 * True when the sites fall within `spots` spots of chord SPOT_CHORD (0.5 m). Accepting all of a
 * set is always sound (the set holds every needed site of the piece), only less tight, and sites
 * that close are all but tied wherever they matter.
 */
function atMostSpots(points: SitePoints, set: readonly number[], spots: number): boolean {
  const v = points.xyz;
  const seen: number[] = [];
  for (const k of set) {
    const near = seen.some((s) => Math.hypot(v[3 * k]! - v[3 * s]!, v[3 * k + 1]! - v[3 * s + 1]!, v[3 * k + 2]! - v[3 * s + 2]!) <= SPOT_CHORD);
    if (near) continue;
    if (seen.length === spots) return false;
    seen.push(k);
  }
  return true;
}

/**
 * Drops every place that places holding at least k sites beat strictly (beyond DOT_TOLERANCE)
 * all along [a, b]: it is needed nowhere there. `exact` is true when every survivor is shown to
 * be needed somewhere by the lemma above (then the survivors are exactly the needed places).
 * Only a place strictly nearer at q (larger dot product) can beat another all along the piece,
 * so each place is tried against the nearer ones only, nearest first.
 */
function prune(p: Piece, a: number, b: number, set: readonly number[], x: number, y: number, z: number): { live: number[]; exact: boolean } {
  const m = set.length;
  if (m < 2) return { live: set.slice(), exact: true };
  const v = p.points.xyz;
  const sitesAt = p.points.sitesAt;
  const dots = scratch(m);
  for (let i = 0; i < m; i++) {
    const s = set[i]!;
    dots[i] = v[3 * s]! * x + v[3 * s + 1]! * y + v[3 * s + 2]! * z;
  }
  const order = Array.from({ length: m }, (_, i) => i).sort((i, j) => dots[j]! - dots[i]! || set[i]! - set[j]!);
  const live: number[] = [];
  let total = 0;
  for (let i = 0; i < m; i++) {
    const s = order[i]!;
    let beaten = 0;
    for (let j = 0; j < i && beaten < p.k; j++) {
      const u = order[j]!;
      if (dots[u]! > dots[s]! && maxAdvantage(p, a, b, set[s]!, set[u]!) < -DOT_TOLERANCE) beaten += sitesAt[set[u]!]!.length;
    }
    if (beaten < p.k) {
      live.push(s);
      total += sitesAt[set[s]!]!.length;
    }
  }
  let exact = true;
  for (const s of live) {
    const others = total - sitesAt[set[s]!]!.length;
    if (others < p.k) continue;
    // Some u that fails to beat s somewhere and leaves fewer than k others.
    let witness = false;
    for (const u of live) {
      if (u === s || others - sitesAt[set[u]!]!.length >= p.k) continue;
      if (!(dots[u]! > dots[s]! && maxAdvantage(p, a, b, set[s]!, set[u]!) < -DOT_TOLERANCE)) {
        witness = true;
        break;
      }
    }
    if (!witness) {
      exact = false;
      break;
    }
  }
  return { live: live.map((i) => set[i]!), exact };
}

/** Survivor sets of up to k + this many places are searched for witnesses (the search is O(m^3)). */
const WITNESS_EXTRA = 3;

/**
 * True when every site of `live` (which holds every needed site of the piece) is shown needed at
 * some point of the piece: fewer than k sites of `live` strictly nearer there (the lemma above).
 * Between two consecutive points where two sites tie, the order of all sites is fixed, so the
 * ties, the ends and the middles between them are the only points worth trying. This test only
 * decides when to stop splitting: a wrong "yes" (rounding) would lengthen a list, never shorten it.
 */
function everyOneWitnessed(p: Piece, a: number, b: number, live: readonly number[]): boolean {
  const m = live.length;
  const t0 = a * RAD;
  const t1 = b * RAD;
  const ts: number[] = [t0, t1];
  for (let i = 0; i < m; i++) for (let j = i + 1; j < m; j++) ties(p, live[i]!, live[j]!, t0, t1, ts);
  ts.sort((u, v) => u - v);
  const samples = ts.length;
  for (let i = 0; i + 1 < samples; i++) ts.push((ts[i]! + ts[i + 1]!) / 2);
  const sitesAt = p.points.sitesAt;
  const v = p.points.xyz;
  // Each site's dot product along the circle: A cos t + B sin t + C.
  const terms = new Float64Array(3 * m);
  for (let i = 0; i < m; i++) {
    const s = live[i]!;
    if (p.seg.meridian) {
      terms[3 * i] = v[3 * s]! * p.cosFixed + v[3 * s + 1]! * p.sinFixed;
      terms[3 * i + 1] = v[3 * s + 2]!;
    } else {
      terms[3 * i] = v[3 * s]! * p.cosFixed;
      terms[3 * i + 1] = v[3 * s + 1]! * p.cosFixed;
      terms[3 * i + 2] = v[3 * s + 2]! * p.sinFixed;
    }
  }
  let pending = (1 << m) - 1;
  const f = new Float64Array(m);
  for (const t of ts) {
    const c = Math.cos(t);
    const sn = Math.sin(t);
    for (let i = 0; i < m; i++) f[i] = terms[3 * i]! * c + terms[3 * i + 1]! * sn + terms[3 * i + 2]!;
    for (let i = 0; i < m; i++) {
      if (!(pending & (1 << i))) continue;
      let nearer = 0;
      for (let j = 0; j < m; j++) if (f[j]! > f[i]!) nearer += sitesAt[live[j]!]!.length;
      if (nearer < p.k) pending &= ~(1 << i);
    }
    if (pending === 0) return true;
  }
  return false;
}

/** Parameters in [t0, t1] where sites s and u are equally near: (s - u) . p(t) = 0 there. */
function ties(p: Piece, s: number, u: number, t0: number, t1: number, out: number[]): void {
  const { alpha, beta, gamma } = advantageTerms(p, s, u);
  const r = Math.hypot(alpha, beta);
  if (r === 0 || Math.abs(gamma) > r) return;
  // alpha cos t + beta sin t = r cos(t - phi) = -gamma.
  const phi = Math.atan2(beta, alpha);
  const delta = Math.acos(-gamma / r);
  for (const c of [phi + delta, phi - delta]) {
    for (let t = c + 2 * Math.PI * Math.ceil((t0 - c) / (2 * Math.PI)); t <= t1; t += 2 * Math.PI) out.push(t);
  }
}

/** (P - Q) . p(t) = alpha cos t + beta sin t + gamma along the piece's circle. */
function advantageTerms(piece: Piece, p: number, q: number): { alpha: number; beta: number; gamma: number } {
  const v = piece.points.xyz;
  const dx = v[3 * p]! - v[3 * q]!;
  const dy = v[3 * p + 1]! - v[3 * q + 1]!;
  const dz = v[3 * p + 2]! - v[3 * q + 2]!;
  const cos = piece.cosFixed;
  const sin = piece.sinFixed;
  // Meridian: p(t) = (cos t cos L, cos t sin L, sin t), t = latitude.
  if (piece.seg.meridian) return { alpha: dx * cos + dy * sin, beta: dz, gamma: 0 };
  // Parallel: p(t) = (cos F cos t, cos F sin t, sin F), t = longitude.
  return { alpha: dx * cos, beta: dy * cos, gamma: dz * sin };
}

/**
 * Largest value over [a, b] of (P - Q) . p, the amount by which location P is nearer than Q
 * (in dot product, which grows as distance shrinks). Along either kind of segment it is
 * alpha cos t + beta sin t + gamma; its maximum is at an end or at t = atan2(beta, alpha).
 */
function maxAdvantage(piece: Piece, a: number, b: number, p: number, q: number): number {
  const { alpha, beta, gamma } = advantageTerms(piece, p, q);
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
