// Zipf popularity over N cache entries as weighted nodes for characteristic-time.ts. Up to EXACT_ZIPF_LIMIT entries
// every rank is its own node. Beyond that the head ranks stay exact and the tail sum over ranks
// K+1..N is replaced by the integral over [K + 1/2, N + 1/2] (the midpoint rule read backwards; its
// error is about f'(K)/24, negligible here), evaluated by Gauss-Legendre panels in log-rank, where the
// integrand (1 - exp(-T x^-s / Z)) is a smooth step. A million entries become a few hundred nodes.

import { weightedItems, type WeightedItems } from './characteristic-time';
import { atIndex } from '../indexed';

export const EXACT_ZIPF_LIMIT = 256;
const HEAD_RANKS = 128;
const GAUSS_ORDER = 8;
const MAX_PANEL_WIDTH = 0.5;

interface GaussRule {
  nodes: number[];
  weights: number[];
}

/** Gauss-Legendre nodes and weights on [-1, 1], found by Newton's method on the Legendre polynomial. */
export function gaussLegendre(order: number): GaussRule {
  const nodes: number[] = [];
  const weights: number[] = [];
  for (let i = 1; i <= order; i++) {
    let x = Math.cos((Math.PI * (i - 0.25)) / (order + 0.5));
    let derivative = 0;
    for (let iteration = 0; iteration < 100; iteration++) {
      let p0 = 1;
      let p1 = x;
      for (let k = 2; k <= order; k++) {
        const p2 = ((2 * k - 1) * x * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      derivative = (order * (x * p1 - p0)) / (x * x - 1);
      const dx = p1 / derivative;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    nodes.push(x);
    weights.push(2 / ((1 - x * x) * derivative * derivative));
  }
  return { nodes, weights };
}

const RULE = gaussLegendre(GAUSS_ORDER);

/** Zipf(s) popularity over `entries` items as weighted nodes (exact for small N, head + tail beyond). */
export function zipfItems(entries: number, exponent: number): WeightedItems {
  const nodes: Array<{ count: number; probability: number }> = [];
  const head = entries <= EXACT_ZIPF_LIMIT ? entries : HEAD_RANKS;
  for (let rank = 1; rank <= head; rank++) nodes.push({ count: 1, probability: rank ** -exponent });
  if (head < entries) {
    const from = Math.log(head + 0.5);
    const to = Math.log(entries + 0.5);
    const panelWidth = Math.min(MAX_PANEL_WIDTH, exponent > 0 ? 0.5 / exponent : MAX_PANEL_WIDTH);
    const panels = Math.max(1, Math.ceil((to - from) / panelWidth));
    const width = (to - from) / panels;
    for (let panel = 0; panel < panels; panel++) {
      const middle = from + (panel + 0.5) * width;
      for (let k = 0; k < GAUSS_ORDER; k++) {
        const t = middle + (0.5 * width * (atIndex(RULE.nodes, k)));
        const x = Math.exp(t);
        // dx = x dt: the node stands for (weight * width/2 * x) ranks.
        nodes.push({ count: (atIndex(RULE.weights, k)) * 0.5 * width * x, probability: x ** -exponent });
      }
    }
  }
  const items = weightedItems(nodes);
  // The quadrature integrates the rank count to rounding error; pin it so "full coverage" is exact.
  return { ...items, total: entries };
}
