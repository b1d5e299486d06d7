// The image files definitions name, read for the linter's image rules: headers only (no table
// walk), each chain once per run however many definitions name it. Images are only ever read.
import { chainProblem, readChain, type ChainLayer } from '../image';
import type { ImageChainFacts, ImageLayerFacts, ImageLookup } from '../model/images';

function layerFacts(layer: ChainLayer): ImageLayerFacts {
  const header = layer.header;
  return {
    path: layer.path,
    name: layer.name,
    format: layer.format,
    virtualSize: layer.virtualSize ?? undefined,
    clusterSize: header?.clusterSize,
    extendedL2: header?.extendedL2,
    refcountBits: header ? BigInt(header.refcountBits) : undefined,
    backingName: header ? header.backingFile : undefined,
  };
}

export function chainFacts(layers: readonly ChainLayer[]): ImageChainFacts {
  const problem = chainProblem(layers);
  return {
    layers: layers.map(layerFacts),
    ...(problem ? { problem: { kind: problem.kind, message: problem.message, layer: problem.layer } } : {}),
  };
}

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
