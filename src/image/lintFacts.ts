// Reads the image chains a set of definitions names, for the linter (which never reads files).
import type { ImageChainFacts, ImageLayerFacts } from '../model/images';
import { chainProblem, readChain, type ChainLayer } from './chain';

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
    backingName: header?.backingFile ?? null,
  };
}

export async function readChainFacts(path: string, signal?: AbortSignal): Promise<ImageChainFacts> {
  const layers = await readChain(path, { signal });
  const problem = chainProblem(layers);
  return { layers: layers.map(layerFacts), ...(problem ? { problem } : {}) };
}

/** Reads every path once (a few at a time) and returns a lookup for lintDocument's options. */
export async function readAllChainFacts(paths: Iterable<string>, signal?: AbortSignal): Promise<Map<string, ImageChainFacts>> {
  const unique = [...new Set(paths)];
  const facts = new Map<string, ImageChainFacts>();
  const workers = Array.from({ length: Math.min(8, unique.length) }, async (_, worker) => {
    for (let i = worker; i < unique.length; i += 8) {
      const path = unique[i] as string;
      facts.set(path, await readChainFacts(path, signal));
    }
  });
  await Promise.all(workers);
  return facts;
}
