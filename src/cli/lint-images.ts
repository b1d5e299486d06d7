// The image files definitions name, read for the linter's image rules: headers only (no table
// walk), each chain once per run however many definitions name it. Images are only ever read.
import { readChain } from '../image';
import { chainFacts } from '../image/lint-facts';
import type { ImageChainFacts, ImageLookup } from '../model/images';

/** Reads chains on demand and remembers them for the rest of the run. */
export class ImageFacts {
  private readonly chains = new Map<string, ImageChainFacts>();

  /** Reads every chain in `paths` not read yet. */
  async load(paths: readonly string[]): Promise<void> {
    for (const path of paths) {
      if (this.chains.has(path)) continue;
      this.chains.set(path, chainFacts(await readChain(path)));
    }
  }

  readonly lookup: ImageLookup = (path) => this.chains.get(path);
}
