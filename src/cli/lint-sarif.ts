// `cachewright lint --format sarif`: one SARIF 2.1.0 log with one run. Locations are relative to the
// mapping file's folder (a base id the log resolves itself), columns and character offsets are
// UTF-16 code units, fixes carry the engine's own edits, and suppressed findings stay in the log
// with their justification.
import * as nodePath from 'node:path';
import { pathToFileURL } from 'node:url';
import { RULES, type Finding, type Fix, type SourceRange } from '../lint';
import type { Severity } from '../core/results';
import { pointerWithin } from '../model/jsonpath';
import { baselineOf, mappingRelative, shownFindings, type LintRun } from './lint-results';
import { FINGERPRINT_KEY, fingerprintOf, subjectOf } from '../review/identity';
import type { KnownEntry } from '../review/known';

/** The base id every artifact location is relative to: the mapping file's folder. */
export const SARIF_BASE_ID = 'MAPPING_ROOT';

const LEVEL: Record<Severity, 'error' | 'warning' | 'note'> = { error: 'error', warning: 'warning', info: 'note' };

interface ArtifactLocation {
  uri: string;
  uriBaseId?: string;
}

function artifactLocation(run: LintRun, absolutePath: string): ArtifactLocation {
  const relative = mappingRelative(run.mapping, absolutePath);
  if (relative.startsWith('../') || relative === '..') return { uri: pathToFileURL(absolutePath).href };
  return { uri: relative.split('/').map(encodeURIComponent).join('/'), uriBaseId: SARIF_BASE_ID };
}

function region(range: SourceRange) {
  return {
    startLine: range.line,
    startColumn: range.column,
    endLine: range.endLine,
    endColumn: range.endColumn,
    charOffset: range.offset,
    charLength: range.length,
  };
}

function location(artifact: ArtifactLocation, range: SourceRange, pointer: string, message?: string, id?: number) {
  return {
    id,
    physicalLocation: { artifactLocation: artifact, region: region(range) },
    logicalLocations: pointer === '' ? undefined : [{ fullyQualifiedName: pointer }],
    message: message === undefined ? undefined : { text: message },
  };
}

const RULE_INDEX: ReadonlyMap<string, number> = new Map(RULES.map((rule, index) => [rule.id, index]));

/** SARIF's fixes: the finding's own first, then the alternatives it offers. */
function sarifFixes(artifact: ArtifactLocation, fixes: readonly Fix[]) {
  const usable = fixes.filter((fix) => fix.edits.length > 0);
  if (usable.length === 0) return undefined;
  return usable.map((fix) => ({
    description: { text: fix.title },
    artifactChanges: [{
      artifactLocation: artifact,
      replacements: fix.edits.map((edit) => ({ deletedRegion: { charOffset: edit.offset, charLength: edit.length }, insertedContent: { text: edit.text } })),
    }],
  }));
}

/**
 * The result's property bag: the machine and disk the finding belongs to (the names the JSON output
 * uses), and the measured figures of its disk when a trace was read for it (byte counts as numbers).
 */
function resultProperties(report: NonNullable<LintRun['files'][number]['report']>, finding: Finding) {
  const disk = report.disks
    .filter((d) => d.measured && pointerWithin(finding.pointer, d.pointer))
    .sort((a, b) => b.pointer.length - a.pointer.length)[0];
  const m = disk?.measured;
  const properties = {
    ...(finding.machine !== undefined ? { machine: finding.machine } : {}),
    ...(finding.disk !== undefined ? { disk: finding.disk } : {}),
    ...(m ? { measured: { ...m, workingSet: Number(m.workingSet), recommendedL2Cache: Number(m.recommendedL2Cache) } } : {}),
  };
  return Object.keys(properties).length > 0 ? properties : undefined;
}

function result(run: LintRun, path: string, finding: Finding, report: NonNullable<LintRun['files'][number]['report']>) {
  const artifact = artifactLocation(run, path);
  // The identity that survives unrelated edits lets a code-scanning service follow a result across runs.
  const subject = subjectOf({ path: mappingRelative(run.mapping, path), disks: report.disks, machines: report.machines, findings: report.findings }, finding);
  return {
    ruleId: finding.rule,
    ruleIndex: RULE_INDEX.get(finding.rule),
    level: LEVEL[finding.severity],
    message: { text: finding.message },
    locations: [location(artifact, finding.range, finding.pointer)],
    partialFingerprints: { [FINGERPRINT_KEY]: fingerprintOf(subject) },
    baselineState: baselineOf(run, finding),
    relatedLocations: finding.related?.map((r, i) => location(r.file !== undefined ? artifactLocation(run, r.file) : artifact, r.range, r.pointer, r.message, i + 1)),
    fixes: sarifFixes(artifact, [...(finding.fix ? [finding.fix] : []), ...(finding.alternatives ?? [])]),
    properties: resultProperties(report, finding),
    suppressions: finding.accepted
      ? [{ kind: finding.accepted.from === 'mapping' ? 'external' : 'inSource', status: 'accepted', justification: finding.accepted.reason }]
      : undefined,
  };
}

/** A known finding the run no longer has: SARIF's "absent" result, placed at its file. */
function absentResult(run: LintRun, entry: KnownEntry) {
  const subject = entry.host !== undefined ? `host ${entry.host}` : [entry.machine, entry.disk].filter((p) => p !== undefined).join(' / ');
  return {
    ruleId: entry.rule,
    ruleIndex: RULE_INDEX.get(entry.rule),
    kind: 'pass',
    level: 'none',
    message: { text: `no longer found: ${entry.rule}${subject ? ` on ${subject}` : ''}${entry.field ? ` at ${entry.field}` : ''}` },
    locations: [{ physicalLocation: { artifactLocation: artifactLocation(run, nodePath.resolve(run.mapping.dir, entry.file)) } }],
    partialFingerprints: { [FINGERPRINT_KEY]: entry.fingerprint },
    baselineState: 'absent',
  };
}

export function renderSarif(run: LintRun): string {
  const results = [
    ...run.files.flatMap((file) => ((report) => (report ? shownFindings(run, report).map((f) => result(run, file.path, f, report)) : []))(file.report)),
    ...(run.known?.gone ?? []).map((entry) => absentResult(run, entry)),
  ];
  const notifications = run.files
    .flatMap((file) => (file.error === undefined ? [] : [{ path: file.path, error: file.error }]))
    .map((file) => ({
      level: 'error',
      message: { text: file.error },
      locations: [{ physicalLocation: { artifactLocation: artifactLocation(run, file.path) } }],
    }));
  const log = {
    $schema: 'https://json.schemastore.org/sarif-2.1.0.json',
    version: '2.1.0',
    runs: [{
      tool: {
        driver: {
          name: 'cachewright',
          version: run.version,
          semanticVersion: run.version,
          rules: RULES.map((rule) => ({
            id: rule.id,
            shortDescription: { text: rule.description },
            help: { text: `${rule.description} See ${rule.docs} in the cachewright package.`, markdown: `${rule.description} See [${rule.docs}](${rule.docs}).` },
            defaultConfiguration: { level: LEVEL[rule.severity] },
            properties: { fixable: rule.fixable },
          })),
        },
      },
      invocations: [{ executionSuccessful: notifications.length === 0, toolExecutionNotifications: notifications.length > 0 ? notifications : undefined }],
      originalUriBaseIds: { [SARIF_BASE_ID]: { uri: pathToFileURL(run.mapping.dir.endsWith('/') ? run.mapping.dir : `${run.mapping.dir}/`).href } },
      columnKind: 'utf16CodeUnits',
      results,
    }],
  };
  return `${JSON.stringify(log, null, 2)}\n`;
}
