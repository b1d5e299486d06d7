// The image files definitions name, read for the image rules in a trusted workspace: headers only,
// each chain once, read again only when one of its files changed (size or time). Read-only.
import { promises as fs } from 'node:fs';
import { readChain } from '../image';
import { chainFacts } from '../image/lint-facts';
import type { ImageChainFacts, ImageLookup } from '../model/images';

interface Entry {
  facts: ImageChainFacts;
  /** Each layer's file and the stamp it had when read. */
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

  /**
   * Reads the chains in `paths` that are new or whose files changed since they were read; resolves
   * true when any facts changed (the caller then lints again).
   */
  async load(paths: readonly string[]): Promise<boolean> {
    let changed = false;
    for (const path of new Set(paths)) {
      const known = this.entries.get(path);
      if (known) {
        const current = await Promise.all(known.stamps.map(async (s) => (await stampOf(s.path)) === s.stamp));
        if (current.every(Boolean)) continue;
      }
      const facts = chainFacts(await readChain(path));
      const files = facts.layers.length > 0 ? facts.layers.map((l) => l.path) : [path];
      this.entries.set(path, { facts, stamps: await Promise.all(files.map(async (p) => ({ path: p, stamp: await stampOf(p) }))) });
      changed = true;
    }
    return changed;
  }

  clear(): void {
    this.entries.clear();
  }

  readonly lookup: ImageLookup = (path) => this.entries.get(path)?.facts;
}
