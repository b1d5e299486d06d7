// Severities: each rule's default, the mapping file's `rules` overrides, and the editor's settings
// (LintOptions.severities) over both (docs/cli.md fixes the defaults).
import { strict as assert } from 'node:assert';
import { lintDocument, RULES } from '../../src/lint';
import { CONTRACT } from '../helpers/sources';
import { findingsOf, lintCase, mappingFor, oneDisk, pathFor } from './harness';

const TEXT = oneDisk('size: 1T\ncluster: 1M\ncache: { l2: 1M }');

describe('severities', () => {
  it(`${CONTRACT} the default severities are the contract's`, () => {
    const expected: Record<string, string> = {
      'invalid-value': 'error', 'cache-options-conflict': 'error', 'cache-not-aligned': 'warning', 'l2-cache-undersized': 'warning',
      'l2-cache-oversized': 'info', 'cluster-cow-amplification': 'warning', 'cleanup-interval-missing': 'warning', 'cache-entry-size-suggested': 'info',
      'machine-cache-budget': 'warning', 'image-mismatch': 'error', 'image-unreadable': 'error', 'backing-chain-cycle': 'error',
    };
    for (const [id, severity] of Object.entries(expected)) assert.equal(RULES.find((r) => r.id === id)?.severity, severity, id);
  });
  it('the mapping file\'s rules key changes a severity, or turns a rule off', () => {
    const report = lintCase({ text: TEXT, mapping: { rules: { 'l2-cache-undersized': 'error', 'cluster-cow-amplification': 'off' } } });
    assert.deepEqual(findingsOf(report, 'l2-cache-undersized').map((f) => f.severity), ['error']);
    assert.deepEqual(findingsOf(report, 'cluster-cow-amplification'), []);
    assert.deepEqual(findingsOf(lintCase({ text: TEXT }), 'cluster-cow-amplification').map((f) => f.severity), ['warning']);
  });
  it('editor settings win over the mapping file', () => {
    const mapping = mappingFor({ rules: { 'l2-cache-undersized': 'error' } });
    const report = lintDocument({ path: pathFor(TEXT), text: TEXT }, mapping, { severities: { 'l2-cache-undersized': 'info', 'cache-entry-size-suggested': 'off' } });
    assert.deepEqual(findingsOf(report, 'l2-cache-undersized').map((f) => f.severity), ['info']);
    assert.deepEqual(findingsOf(report, 'cache-entry-size-suggested'), []);
  });
  it('a rule turned off gives no finding even where its fix would apply', () => {
    const report = lintCase({ text: oneDisk('size: 8G\ncache: { l2: 1000K }'), mapping: { rules: { 'cache-not-aligned': 'off' } } });
    assert.deepEqual(findingsOf(report, 'cache-not-aligned'), []);
  });
});
