/** mulberry32 (public domain): a seeded generator, uniform in [0, 1); the same sequence for a seed on every run. */
export declare function mulberry32(seed: number): () => number;
