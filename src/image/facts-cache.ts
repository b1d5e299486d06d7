// The image files definitions name, read for the linter's image rules: headers only (no table walk),
// each chain once however many definitions name it. A long-lived cache (the editor) reads a chain
// again when one of its files changed (size or time); a one-run cache (the CLI) never looks again.
// Images are only ever read.
import { promises as fs } from 'node:fs';
import type { ImageChainFacts, ImageLookup } from '../model/images';
import { readChain } from './chain';
import { chainFacts } from './lint-facts';

interface Entry {
  facts: ImageChainFacts;
  /** Each layer's file and the stamp it had when read (empty when the cache never looks again). */
  stamps: Array<{ path: string; stamp: string }>;
}

async function stampOf(path: string): Promise<string> {
  try {
    const stat = await fs.stat(path);
    return `${stat.size}:${stat.mtimeMs}`;
  } catch {
    return 'missing';
  }
}

export class ImageFactsCache {
  private readonly entries = new Map<string, Entry>();

  /** `recheck`: whether a chain read before is read again when one of its files changed. */
  constructor(private readonly options: { recheck: boolean }) {}

  /**
   * Reads the chains in `paths` that are new (or changed, with recheck). Resolves true when the facts
   * of any of them differ from those known when it was called (the caller lints, then calls this in
   * the same turn), so a chain another call read meanwhile still tells this caller to lint again.
   */
  async load(paths: readonly string[]): Promise<boolean> {
    const unique = new Set(paths);
    const seen = new Map([...unique].map((path) => [path, this.entries.get(path)]));
    for (const path of unique) {
      const known = this.entries.get(path);
      if (known && !(await this.stale(known))) continue;
      const facts = chainFacts(await readChain(path));
      this.entries.set(path, { facts, stamps: this.options.recheck ? await stampsOf(path, facts) : [] });
    }
    return [...seen].some(([path, entry]) => this.entries.get(path) !== entry);
  }

  clear(): void {
    this.entries.clear();
  }

  readonly lookup: ImageLookup = (path) => this.entries.get(path)?.facts;

  private async stale(entry: Entry): Promise<boolean> {
    if (!this.options.recheck) return false;
    const current = await Promise.all(entry.stamps.map(async (s) => (await stampOf(s.path)) === s.stamp));
    return !current.every(Boolean);
  }
}

async function stampsOf(path: string, facts: ImageChainFacts): Promise<Entry['stamps']> {
  const files = facts.layers.length > 0 ? facts.layers.map((l) => l.path) : [path];
  return Promise.all(files.map(async (p) => ({ path: p, stamp: await stampOf(p) })));
}
