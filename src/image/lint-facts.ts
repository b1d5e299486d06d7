// The facts the linter's image rules need, from a chain's headers (src/lint.ts never reads files).
import type { ImageChainFacts, ImageLayerFacts } from '../model/images';
import { chainProblem, type ChainLayer } from './chain';

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
