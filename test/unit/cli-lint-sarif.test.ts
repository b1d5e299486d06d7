// `cachewright lint --format sarif`, validated against the SARIF 2.1.0 JSON schema and read back the
// way a SARIF consumer would: rules, results, regions, fixes, suppressions.
//
// The schema: "Static Analysis Results Format (SARIF) Version 2.1.0-rtm.5 JSON Schema", as shipped
// in the npm package @microsoft/jest-sarif (lib/schemas/sarif-2.1.0-rtm.5.json), a JSON Schema
// draft-04 document, checked with ajv (ajv-draft-04 + ajv-formats). Nothing is downloaded at test time.
import { strict as assert } from 'node:assert';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import Ajv from 'ajv-draft-04';
import addFormats from 'ajv-formats';
import sarifSchema from '@microsoft/jest-sarif/lib/schemas/sarif-2.1.0-rtm.5.json';
import { RULES } from '../../src/lint';
import { CONTRACT } from '../helpers/sources';
import { lintIn, makeWorkspace, removeWorkspace, WORKSPACE } from '../fixtures/lint/run';

const SARIF = '[SARIF OASIS SARIF 2.1.0]';

// The schema's pattern for `language` has a stray bracket that only a non-unicode RegExp accepts.
const ajv = new Ajv({ allErrors: true, strict: false, unicodeRegExp: false });
addFormats(ajv);
const validate = ajv.compile(sarifSchema);

interface Region {
  startLine: number;
  startColumn: number;
  endLine: number;
  endColumn: number;
  charOffset: number;
  charLength: number;
}
interface Location {
  physicalLocation: { artifactLocation: { uri: string; uriBaseId?: string }; region: Region };
  logicalLocations?: { fullyQualifiedName: string }[];
  message?: { text: string };
}
interface Result {
  ruleId: string;
  ruleIndex: number;
  level: string;
  message: { text: string };
  locations: Location[];
  relatedLocations?: Location[];
  fixes?: { description: { text: string }; artifactChanges: { artifactLocation: { uri: string }; replacements: { deletedRegion: { charOffset: number; charLength: number }; insertedContent: { text: string } }[] }[] }[];
  suppressions?: { kind: string; justification: string }[];
}
interface Log {
  version: string;
  runs: {
    tool: { driver: { name: string; version: string; rules: { id: string; shortDescription: { text: string }; help: { text: string }; defaultConfiguration: { level: string } }[] } };
    invocations: { executionSuccessful: boolean; toolExecutionNotifications?: { level: string; message: { text: string } }[] }[];
    originalUriBaseIds: Record<string, { uri: string }>;
    columnKind: string;
    results: Result[];
  }[];
}

function assertValid(log: unknown): void {
  const ok = validate(log);
  assert.ok(ok, `not valid SARIF 2.1.0: ${JSON.stringify(validate.errors?.slice(0, 5), null, 2)}`);
}

async function sarif(cwd: string, args: string[] = []): Promise<{ code: number | null; log: Log }> {
  const run = await lintIn(cwd, ['--format', 'sarif', ...args]);
  return { code: run.code, log: JSON.parse(run.stdout) as Log };
}

describe('cachewright lint --format sarif', () => {
  it(`${SARIF} the fixture workspace's log validates against the 2.1.0 schema`, async () => {
    const { code, log } = await sarif(WORKSPACE);
    assert.equal(code, 1, 'the exit code does not depend on the format');
    assertValid(log);
    assert.equal(log.version, '2.1.0');
    assert.equal(log.runs.length, 1);
  });

  it(`${SARIF} the driver: name, version, one rule per rule id with its default level and docs page`, async () => {
    const { log } = await sarif(WORKSPACE);
    const driver = log.runs[0]?.tool.driver;
    assert.equal(driver?.name, 'cachewright');
    assert.match(driver?.version ?? '', /^\d+\.\d+\.\d+/);
    assert.deepEqual(driver?.rules.map((r) => r.id), RULES.map((r) => r.id));
    const level = { error: 'error', warning: 'warning', info: 'note' } as const;
    for (const rule of RULES) {
      const entry: Log['runs'][number]['tool']['driver']['rules'][number] | undefined = driver?.rules.find((r) => r.id === rule.id);
      assert.equal(entry?.defaultConfiguration.level, level[rule.severity]);
      assert.ok(entry?.shortDescription.text);
      assert.ok(entry?.help.text.includes(`docs/rules/${rule.id}.md`));
    }
  });

  it(`${SARIF} results: rule index, level, region in UTF-16 columns, the JSON Pointer as logical location`, async () => {
    const { log } = await sarif(WORKSPACE);
    const run = log.runs[0];
    assert.ok(run);
    assert.equal(run.columnKind, 'utf16CodeUnits');
    for (const result of run.results) assert.equal(run.tool.driver.rules[result.ruleIndex]?.id, result.ruleId);
    const undersized = run.results.find((r) => r.ruleId === 'l2-cache-undersized' && !r.suppressions);
    assert.ok(undersized);
    assert.equal(undersized.level, 'warning');
    const location = undersized.locations[0];
    assert.deepEqual(location?.physicalLocation.artifactLocation, { uri: 'hosts/undersized.yaml', uriBaseId: 'MAPPING_ROOT' });
    const text = fs.readFileSync(path.join(WORKSPACE, 'hosts/undersized.yaml'), 'utf8');
    assert.deepEqual(location?.physicalLocation.region, { startLine: 8, startColumn: 15, endLine: 8, endColumn: 17, charOffset: text.indexOf('8M'), charLength: 2 });
    assert.deepEqual(location?.logicalLocations, [{ fullyQualifiedName: '/guests/0/drives/0/cache/l2' }]);
    const conflict = run.results.find((r) => r.ruleId === 'cache-options-conflict');
    assert.equal(conflict?.level, 'error');
    assert.ok((conflict?.relatedLocations?.length ?? 0) >= 2, 'the other settings of the conflict are related locations');
    const info = run.results.find((r) => r.ruleId === 'l2-cache-oversized');
    assert.equal(info?.level, 'note');
  });

  it(`${SARIF} the base id resolves to the mapping file's folder`, async () => {
    const { log } = await sarif(path.join(WORKSPACE, 'hosts'));
    const base = log.runs[0]?.originalUriBaseIds.MAPPING_ROOT?.uri ?? '';
    assert.ok(base.endsWith('/'), 'a base URI names a folder');
    assert.equal(path.resolve(fileURLToPath(base)), WORKSPACE);
  });

  it(`${SARIF} fixes: the engine's edits as deleted regions and inserted content`, async () => {
    const { log } = await sarif(WORKSPACE, ['hosts/undersized.yaml']);
    const text = fs.readFileSync(path.join(WORKSPACE, 'hosts/undersized.yaml'), 'utf8');
    const fix = log.runs[0]?.results[0]?.fixes?.[0];
    assert.ok(fix?.description.text);
    assert.deepEqual(fix.artifactChanges, [{
      artifactLocation: { uri: 'hosts/undersized.yaml', uriBaseId: 'MAPPING_ROOT' },
      replacements: [{ deletedRegion: { charOffset: text.indexOf('8M'), charLength: 2 }, insertedContent: { text: '128M' } }],
    }]);
  });

  it(`${CONTRACT} suppressed findings stay in the log: external (mapping accept list) or inSource (a comment), with the reason`, async () => {
    const { log } = await sarif(WORKSPACE);
    const suppressed = (log.runs[0]?.results ?? []).filter((r) => r.suppressions).map((r) => [r.locations[0]?.physicalLocation.artifactLocation.uri, r.ruleId, r.suppressions]);
    assert.deepEqual(suppressed, [
      ['hosts/accepted.json', 'cache-not-aligned', [{ kind: 'external', status: 'accepted', justification: 'kept as provisioned until the next rebuild' }]],
      ['hosts/accepted.yaml', 'l2-cache-undersized', [{ kind: 'inSource', status: 'accepted', justification: 'moving to a larger host in the next maintenance window' }]],
    ]);
  });

  it(`${SARIF} a file that cannot be read is a tool notification; the log stays valid`, async () => {
    const { code, log } = await sarif(WORKSPACE, ['hosts/missing.yaml', 'hosts/undersized.yaml']);
    assert.equal(code, 2);
    assertValid(log);
    const invocation = log.runs[0]?.invocations[0];
    assert.equal(invocation?.executionSuccessful, false);
    assert.match(invocation?.toolExecutionNotifications?.[0]?.message.text ?? '', /no such file/);
  });

  it(`${SARIF} paths with spaces and non-ASCII names are URI-encoded; parse errors and empty runs validate`, async () => {
    const dir = makeWorkspace({
      'cachewright.yaml': 'version: 1\ninclude: ["**/*.yaml"]\ndisks: "$.drives[*]"\nfields: { disk: { size: "$.size", l2Cache: "$.l2" } }\n',
      'site a/hôte 1.yaml': 'drives:\n  - { size: 1T, l2: 8M }\n',
      'site a/broken.yaml': 'drives: [\n',
    });
    try {
      const { log } = await sarif(dir);
      assertValid(log);
      const uris = new Set((log.runs[0]?.results ?? []).map((r) => r.locations[0]?.physicalLocation.artifactLocation.uri));
      assert.deepEqual([...uris].sort(), ['site%20a/broken.yaml', 'site%20a/h%C3%B4te%201.yaml']);
      const empty = await sarif(dir, ['--errors-only', 'site a/hôte 1.yaml']);
      assertValid(empty.log);
      assert.deepEqual(empty.log.runs[0]?.results, []);
    } finally {
      removeWorkspace(dir);
    }
  });
});
