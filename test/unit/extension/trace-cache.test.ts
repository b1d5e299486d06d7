// The editor's trace cache: curves measured in a worker thread (the built dist/trace-worker.js, as
// the packaged extension runs it) equal the reference LRU's hits, a second lint of the same request
// reads nothing, a changed or missing file is read again, and a cancelled job is reported, not hung.
import { strict as assert } from 'node:assert';
import { existsSync, writeFileSync, utimesSync } from 'node:fs';
import { join } from 'node:path';
import { TraceCurveCache, type RunningTraceJob } from '../../../src/extension/traces';
import type { TraceRequest } from '../../../src/model/traces';
import { asCsv, libraryHits, lookupsOf, tempFolder, type Request } from '../trace/helpers';
import { mulberry32 } from '../../helpers/seeded-random.cjs';

const WORKER = join(__dirname, '..', '..', '..', 'dist', 'trace-worker.js');
const KiB = 1024;
const MiB = 1024 * KiB;
const GiB = 1024 * MiB;

function randomRequests(count: number, seed: number): Request[] {
  const next = mulberry32(seed);
  return Array.from({ length: count }, () => ({ offset: Math.floor(next() * (8 * GiB / (4 * KiB))) * 4 * KiB, length: 4 * KiB, op: 'read' as const }));
}

describe('editor trace cache (worker thread)', () => {
  const folder = tempFolder('trace-cache');
  const trace = join(folder.dir, 'disk.csv');
  const requests = randomRequests(20_000, 7);
  // 8 GiB disk, 64 KiB clusters, 4 KiB cache entries (slices): one entry maps 512 clusters = 32 MiB.
  const geometry = { virtualSize: BigInt(8 * GiB), clusterSize: BigInt(64 * KiB), extendedL2: false, cacheEntryBytes: BigInt(4 * KiB) };
  const request: TraceRequest = { paths: [trace], geometry };
  const jobs: RunningTraceJob[] = [];

  before(() => {
    assert.ok(existsSync(WORKER), `${WORKER} is built (npm run build)`);
    writeFileSync(trace, asCsv(requests));
  });
  after(() => folder.remove());

  it('measures in the worker exactly what the reference LRU replays [lru-cache]', async () => {
    const cache = new TraceCurveCache(WORKER, (job) => jobs.push(job));
    assert.equal(cache.lookup(request), undefined, 'nothing is known before the job ran');
    assert.equal(await cache.load([request]), true);
    const curve = cache.lookup(request)?.curve;
    assert.ok(curve, JSON.stringify(cache.lookup(request)?.problem));
    assert.equal(curve.requests, requests.length);
    const keys = lookupsOf(requests, 32 * MiB);
    assert.equal(curve.lookups, keys.length);
    for (const entries of [1, 16, 100, 200, 255]) {
      const hits = Math.round(curve.hitRatioAt(BigInt(entries * 4 * KiB)) * keys.length);
      assert.equal(hits, libraryHits(keys, entries), `hits of a ${entries}-entry cache`);
    }
    assert.deepEqual(curve.span, { start: BigInt(Math.min(...requests.map((r) => r.offset))), end: BigInt(Math.max(...requests.map((r) => r.offset + r.length))) });
    cache.dispose();
  });

  it('reads nothing again for the same files and geometry; reads a changed file again', async () => {
    const started: RunningTraceJob[] = [];
    const cache = new TraceCurveCache(WORKER, (job) => started.push(job));
    await cache.load([request]);
    assert.equal(started.length, 1);
    // Several lints of one text at once share one job; later ones find the curve.
    const again = await Promise.all([cache.load([request]), cache.load([request, { ...request }])]);
    assert.deepEqual(again, [false, false]);
    assert.equal(started.length, 1, 'no second job for the same request');
    // Another cache entry size is another request.
    await cache.load([{ paths: [trace], geometry: { ...geometry, cacheEntryBytes: BigInt(64 * KiB) } }]);
    assert.equal(started.length, 2);
    // The file changes (size and time): measured again, with its new requests.
    writeFileSync(trace, asCsv(requests.slice(0, 1000)));
    const later = new Date(Date.now() + 5000);
    utimesSync(trace, later, later);
    assert.equal(await cache.load([request]), true);
    assert.equal(started.length, 3);
    assert.equal(cache.lookup(request)?.curve?.requests, 1000);
    writeFileSync(trace, asCsv(requests));
    cache.dispose();
  });

  it('reports a missing trace as a problem naming the file, and reads it once it exists', async () => {
    const missing = join(folder.dir, 'later.csv');
    const cache = new TraceCurveCache(WORKER);
    const wanted: TraceRequest = { paths: [missing], geometry };
    assert.equal(await cache.load([wanted]), true);
    const problem = cache.lookup(wanted)?.problem;
    assert.ok(problem && problem.message.includes(missing) && problem.path === missing, JSON.stringify(problem));
    assert.equal(await cache.load([wanted]), false, 'still missing: nothing new');
    writeFileSync(missing, asCsv(requests.slice(0, 10)));
    assert.equal(await cache.load([wanted]), true);
    assert.equal(cache.lookup(wanted)?.curve?.requests, 10);
    cache.dispose();
  });

  it('a cancelled job ends with a problem saying so, and is measured again once forgotten', async () => {
    const cache = new TraceCurveCache(WORKER, (job) => job.cancel());
    assert.equal(await cache.load([request]), true);
    assert.match(cache.lookup(request)?.problem?.message ?? '', /cancelled/);
    cache.forgetUnfinished();
    assert.equal(cache.lookup(request), undefined);
    cache.dispose();
  });
  it('tells a lint to run again when a job another lint started ends while it reads the stamps', async () => {
    // The lint that opened the file found no curve; the job a lint of the file on disk had started
    // ends before this call has read the trace's stamps: the curve is new to this caller all the same.
    let gate: Promise<void> | undefined;
    let open = (): void => undefined;
    class SlowStamps extends TraceCurveCache {
      protected override async stampsOf(paths: readonly string[]): Promise<string> {
        await gate;
        return super.stampsOf(paths);
      }
    }
    const cache = new SlowStamps(WORKER);
    const first = cache.load([request]);
    gate = new Promise((resolve) => (open = resolve));
    const second = cache.load([request]);
    assert.equal(await first, true);
    assert.ok(cache.lookup(request)?.curve, 'the first job measured the curve');
    open();
    assert.equal(await second, true, 'the second caller linted without the curve and must lint again');
    assert.equal(await cache.load([request]), false, 'a lint that saw the curve has nothing new');
    cache.dispose();
  });
});
