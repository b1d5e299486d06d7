// Every rule has its docs page, and each page's "Before" example really gives the finding the page
// says, at the line and column it says, when linted with the demo's mapping file. Keeps the pages
// honest as the rules change.
import { strict as assert } from 'node:assert';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { ImageFactsCache } from '../../src/image/facts-cache';
import { TraceCurves } from '../../src/cli/lint-traces';
import { prepareDocument } from '../../src/lint';
import { traceRequestsOf } from '../../src/lint/traces';
import { lintDocument, lintHosts, loadMapping, RULES, type LintOptions } from '../../src/lint';
import { parseSize } from '../../src/core/units';
import { writeImage } from '../image/qcow2-writer';

const ROOT = path.resolve(__dirname, '../..');
const DEMO_MAPPING = path.join(ROOT, 'examples/cachewright.yaml');

function demoMapping() {
  const load = loadMapping(readFileSync(DEMO_MAPPING, 'utf8'), DEMO_MAPPING);
  assert.ok(load.mapping, load.problems.map((p) => p.message).join('; '));
  return load.mapping;
}

/** The first YAML block after "Before", and every "line L, column C" in the paragraph after it. */
function example(page: string): { text: string; places: { line: number; column: number }[] } | undefined {
  const before = page.indexOf('\nBefore');
  if (before === -1) return undefined;
  const block = /```yaml\n([\s\S]*?)```/.exec(page.slice(before));
  if (!block) return undefined;
  const after = page.slice(before + block.index + block[0].length);
  const paragraph = after.split(/\n\s*\n/).find((p) => p.trim().length > 0) ?? '';
  const places = [...paragraph.matchAll(/line (\d+),\s+column (\d+)/g)].map((m) => ({ line: Number(m[1]), column: Number(m[2]) }));
  return { text: block[1] as string, places };
}

describe('rule docs pages', () => {
  it('the index lists every rule with its severity and fixability, and no other', () => {
    const index = readFileSync(path.join(ROOT, 'docs/rules/README.md'), 'utf8');
    const rows = [...index.matchAll(/^\| \[([a-z0-9-]+)\]\(\1\.md\) \| (\w+) \| (yes|no) \|/gm)].map((m) => [m[1], m[2], m[3]]);
    assert.deepEqual(rows, RULES.map((r) => [r.id, r.severity, r.fixable ? 'yes' : 'no']));
  });
  for (const rule of RULES) {
    describe(rule.id, () => {
      const file = path.join(ROOT, rule.docs);
      it(`has its page at ${rule.docs}, titled with the id and stating severity and fix`, () => {
        assert.ok(existsSync(file), `${rule.docs} is missing`);
        const page = readFileSync(file, 'utf8');
        assert.ok(page.startsWith(`# ${rule.id}\n`));
        assert.ok(page.includes(`**Severity:** ${rule.severity}`), 'severity matches the rule');
        assert.ok(page.includes(`**Fix:** ${rule.fixable ? 'yes' : 'no'}`), 'fixability matches the rule');
        assert.match(page, /## What it catches/);
      });
      it('its "Before" example gives this finding where the page says', async () => {
        const page = readFileSync(file, 'utf8');
        const found = example(page);
        assert.ok(found && found.places.length > 0, 'the page has a Before example and names the place of its finding');
        // The image rules' examples name image files: the page says which exist (written here from
        // the qcow2 specification with the test writer) and the rest are missing.
        const images = /<!-- example images: (.*?) -->/.exec(page);
        let definition = path.join(ROOT, 'examples/fleet/docs-example.yaml');
        let options: LintOptions = {};
        let dir: string | undefined;
        if (images) {
          dir = mkdtempSync(path.join(tmpdir(), 'cachewright-docs-'));
          definition = path.join(dir, 'fleet.yaml');
          for (const spec of (images[1] as string).matchAll(/(\S+\.qcow2) clusterBits=(\d+) size=(\S+)/g)) {
            const target = path.join(dir, spec[1] as string);
            mkdirSync(path.dirname(target), { recursive: true });
            const size = parseSize(spec[3]);
            assert.ok(size.ok);
            writeImage(target, { version: 3, clusterBits: Number(spec[2]), virtualSize: size.value, clusters: [] });
          }
          const facts = new ImageFactsCache({ recheck: false });
          await facts.load([...found.text.matchAll(/file: (\S+)/g)].map((m) => path.join(dir as string, m[1] as string)));
          options = { images: facts.lookup };
        }
        // The trace rules' examples name traces: the page gives how each is generated (a cyclic
        // scan over `cycle` cache entries `span` bytes apart); a trace it does not list is missing.
        const traces = /<!-- example traces: (.*?) -->/.exec(page);
        if (traces) {
          dir ??= mkdtempSync(path.join(tmpdir(), 'cachewright-docs-'));
          definition = path.join(dir, 'fleet.yaml');
          for (const spec of (traces[1] as string).matchAll(/(\S+\.csv) cycle=(\d+) span=(\S+) requests=(\d+)/g)) {
            const target = path.join(dir, spec[1] as string);
            mkdirSync(path.dirname(target), { recursive: true });
            const span = parseSize(spec[3]);
            assert.ok(span.ok);
            const lines = Array.from({ length: Number(spec[4]) }, (_, i) => `${BigInt(i % Number(spec[2])) * span.value},4096`);
            writeFileSync(target, `${lines.join('\n')}\n`);
          }
          const curves = new TraceCurves();
          const prepared = prepareDocument({ path: definition, text: found.text }, demoMapping());
          await curves.load(traceRequestsOf(prepared, options.images));
          options = { ...options, traces: curves.lookup };
        }
        const mapping = demoMapping();
        const report = lintDocument({ path: definition, text: found.text }, mapping, options);
        // The cross-file step, over this one file (host rules report there).
        lintHosts([{ path: definition, machines: report.machines, findings: report.findings }], mapping);
        if (dir) rmSync(dir, { recursive: true, force: true });
        const actual = report.findings.filter((f) => f.rule === rule.id).map((f) => ({ line: f.range.line, column: f.range.column }));
        assert.deepEqual(actual, found.places, report.findings.map((f) => `${f.rule} ${f.range.line}:${f.range.column}`).join('\n'));
      });
    });
  }
});
