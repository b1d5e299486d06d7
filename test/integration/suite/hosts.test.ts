// The host budget in the real editor: the cross-file rule over the workspace, its related
// locations, its update on an unsaved edit in another file, and the status bar's host figures.
// The demo's mapping file gives quill-hv-north 28 GiB; the three ticketing machines on it ask
// 16 + 4 + 8 = 28 GiB of guest RAM, so any disk cache at all takes the host over its memory: the
// rule's error case (docs/rules/host-cache-budget.md, CONTRACTS.md section 1: hosts).
import * as assert from 'node:assert/strict';
import * as vscode from 'vscode';
import { api, codeOf, open, ours, rangeOf, revert, waitFor } from './helpers';

const TICKETING = 'fleet/ticketing.yaml';
const HARBOUR = 'fleet/harbour.json';
const RULE = 'host-cache-budget';

const hostDiagnostic = (uri: vscode.Uri) => ours(uri).find((d) => codeOf(d) === RULE);

describe('the host budget across the workspace', () => {
  before(async () => {
    await api();
  });

  it('is reported at the first machine\'s host, with every machine on the host as a related location', async () => {
    const { document } = await open(TICKETING);
    const found = await waitFor('host-cache-budget on ticketing.yaml', () => hostDiagnostic(document.uri));
    assert.deepEqual(found.range, rangeOf(document, 'hv: quill-hv-north', 'quill-hv-north'));
    assert.equal(found.severity, vscode.DiagnosticSeverity.Error, found.message);
    assert.match(found.message, /quill-hv-north/);
    const related = found.relatedInformation ?? [];
    const lines = related.map((r) => `${vscode.workspace.asRelativePath(r.location.uri)}:${r.location.range.start.line + 1}`);
    const expected = ['tern-db-01', 'tern-web-02', 'tern-cache-03'].map((name) => `${TICKETING}:${rangeOf(document, `hostname: ${name}`, name).start.line + 1}`);
    assert.deepEqual(lines, expected, related.map((r) => r.message).join('; '));
    assert.ok(related.every((r, i) => r.message.startsWith(['tern-db-01', 'tern-web-02', 'tern-cache-03'][i] ?? '?')), related.map((r) => r.message).join('; '));
  });

  it('follows an unsaved edit in another file: the finding moves to the first machine on the host, naming both files', async () => {
    const { document: ticketing } = await open(TICKETING);
    await waitFor('the host finding', () => hostDiagnostic(ticketing.uri));
    const { document: harbour, editor } = await open(HARBOUR);
    try {
      // gull-app-01 moves onto quill-hv-north; harbour.json sorts before ticketing.yaml, so the
      // finding now sits at gull-app-01's host value and lists four machines in two files.
      const range = rangeOf(harbour, '"hv": "quill-hv-south"', 'quill-hv-south');
      assert.ok(await editor.edit((b) => b.replace(range, 'quill-hv-north')));
      const moved = await waitFor('the host finding in harbour.json', () => hostDiagnostic(harbour.uri));
      assert.deepEqual(moved.range, rangeOf(harbour, '"hv": "quill-hv-north"', '"quill-hv-north"'));
      const files = (moved.relatedInformation ?? []).map((r) => vscode.workspace.asRelativePath(r.location.uri));
      assert.deepEqual(files, [HARBOUR, TICKETING, TICKETING, TICKETING]);
      await waitFor('ticketing.yaml to lose it', () => hostDiagnostic(ticketing.uri) === undefined);
    } finally {
      await revert(harbour);
    }
    await waitFor('the finding back in ticketing.yaml', () => hostDiagnostic(ticketing.uri));
    assert.equal(hostDiagnostic(harbour.uri), undefined);
  });

  it('shows the host of the open file\'s machines in the status bar, with per-host figures in the tooltip', async () => {
    const cachewright = await api();
    await open(TICKETING);
    const text = await waitFor('the host in the status bar', () => (/quill-hv-north/.test(cachewright.statusText()) ? cachewright.statusText() : undefined));
    assert.match(text, /quill-hv-north \$\(error\) over memory/);
    const tooltip = cachewright.statusTooltip();
    assert.match(tooltip, /Host quill-hv-north: 3 machines, /);
    assert.match(tooltip, /of 28 GiB = /);
    assert.match(tooltip, /more than its memory/);
    // harbour.json's machines sit on quill-hv-south: its own host, within its share.
    await open(HARBOUR);
    const south = await waitFor('quill-hv-south in the status bar', () => (/quill-hv-south/.test(cachewright.statusText()) ? cachewright.statusText() : undefined));
    assert.match(south, /quill-hv-south [\d.]+ % of cache share/);
    assert.doesNotMatch(cachewright.statusTooltip(), /quill-hv-north/);
  });
});
