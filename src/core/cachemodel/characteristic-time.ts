// The characteristic-time approximation of an LRU cache under independent references [CHE]:
// an item with access probability q stays cached if it is referenced again within the cache's
// characteristic time T, which solves  sum_i (1 - exp(-q_i T)) = C  for a cache of C entries; the
// hit ratio is then  sum_i q_i (1 - exp(-q_i T)).
//
// Items come as weighted nodes (weight = how many items share that probability), so a million
// equally likely entries cost one term, and a Zipf tail can be a quadrature rule (see zipf.ts).
import { atIndex } from '../indexed';

export interface WeightedItems {
  /** How many items each node stands for (may be fractional for quadrature nodes). */
  weights: Float64Array;
  /** Access probability of one item of each node; sum of weights[i] * probabilities[i] is 1. */
  probabilities: Float64Array;
  /** Sum of the weights: the number of items. */
  total: number;
}

export function weightedItems(nodes: ReadonlyArray<{ count: number; probability: number }>): WeightedItems {
  const weights = new Float64Array(nodes.length);
  const probabilities = new Float64Array(nodes.length);
  let total = 0;
  let mass = 0;
  nodes.forEach((node, i) => {
    weights[i] = node.count;
    probabilities[i] = node.probability;
    total += node.count;
    mass += node.count * node.probability;
  });
  // Renormalise so the probabilities sum to exactly 1 despite rounding in the callers' shares.
  for (let i = 0; i < probabilities.length; i++) probabilities[i] = (probabilities[i] ?? 0) / mass;
  return { weights, probabilities, total };
}

/**
 * Solves for the characteristic time T of a cache of `capacity` entries. Works on
 * phi(T) = ln(sum w e^{-qT}) - ln(total - capacity), which is convex and decreasing (a log-sum-exp of
 * linear functions), so Newton's method started at T = 0 climbs monotonically to the root without
 * overshooting; a step-size test ends it.
 */
export function characteristicTime(items: WeightedItems, capacity: number, start = 0): number {
  const { weights, probabilities, total } = items;
  const remaining = total - capacity;
  if (capacity <= 0) return 0;
  if (remaining <= 0) return Number.POSITIVE_INFINITY;
  const target = Math.log(remaining);
  const n = weights.length;
  // Any start left of the root keeps the monotone climb, e.g. the root for a smaller cache.
  let t = Number.isFinite(start) && start > 0 ? start : 0;
  for (let iteration = 0; iteration < 200; iteration++) {
    let s0 = 0;
    let s1 = 0;
    for (let i = 0; i < n; i++) {
      const q = atIndex(probabilities, i);
      const term = (atIndex(weights, i)) * Math.exp(-q * t);
      s0 += term;
      s1 += term * q;
    }
    const excess = Math.log(s0) - target;
    if (excess <= 0 || s1 <= 0) break;
    const step = (excess * s0) / s1;
    t += step;
    if (step <= t * 1e-13) break;
  }
  return t;
}

/**
 * Carries the last solved characteristic time from one cache size to the next larger one: T grows
 * with the cache, so the previous root is a valid start and the next solve takes a step or two.
 */
export interface WarmStart {
  capacity: number;
  time: number;
}

/** The characteristic-time approximation of the LRU hit ratio for a cache of `capacity` entries over `items`. */
export function cheHitRatio(items: WeightedItems, capacity: number, warm?: WarmStart): number {
  if (capacity >= items.total) return 1;
  if (capacity <= 0) return 0;
  const start = warm !== undefined && warm.capacity <= capacity ? warm.time : 0;
  const t = characteristicTime(items, capacity, start);
  if (warm !== undefined) {
    warm.capacity = capacity;
    warm.time = t;
  }
  const { weights, probabilities } = items;
  let hit = 0;
  for (let i = 0; i < weights.length; i++) {
    const q = atIndex(probabilities, i);
    hit += (atIndex(weights, i)) * q * -Math.expm1(-q * t);
  }
  return Math.min(1, Math.max(0, hit));
}

/**
 * The exact LRU hit ratio of a one-entry cache: a hit happens exactly when an access repeats the
 * previous one, so it is sum_i q_i^2 (independent references). The approximation is at its weakest
 * there, and the case is cheap to state exactly.
 */
export function singleEntryHitRatio(items: WeightedItems): number {
  const { weights, probabilities } = items;
  let hit = 0;
  for (let i = 0; i < weights.length; i++) {
    const q = atIndex(probabilities, i);
    hit += (atIndex(weights, i)) * q * q;
  }
  return Math.min(1, hit);
}
