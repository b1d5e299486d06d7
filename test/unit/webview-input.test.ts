// What the host accepts from its webviews (src/protocol/webview-input.ts): a message passes only
// when every field has its type, byte counts arrive as bigint through the wire codec, and anything
// else is dropped instead of being acted on.
import { strict as assert } from 'node:assert';
import { toWire } from '../../src/protocol/wire';
import { decodePanelMessage, decodeViewerWebviewMessage } from '../../src/protocol/webview-input';

const range = { offset: 10, length: 3, line: 2, column: 5, endLine: 2, endColumn: 8 };
const drawn = {
  state: 'done', layers: 2, mapRegions: 64, cacheRows: 9, progressShown: false, changedNotice: false,
  theme: { kind: 'vscode-dark', background: 'rgb(30, 30, 30)', dataFill: 'rgb(55, 148, 255)', cellStroke: 'none' },
};

describe('protocol: messages from a webview are checked in full', () => {
  it('the panel\'s messages pass with their fields, sizes back as bigint', () => {
    assert.deepEqual(decodePanelMessage(toWire({ type: 'ready' })), { type: 'ready' });
    assert.deepEqual(decodePanelMessage(toWire({ type: 'rendered', seq: 4, disks: 3 })), { type: 'rendered', seq: 4, disks: 3 });
    assert.deepEqual(decodePanelMessage(toWire({ type: 'reveal', uri: 'file:///a.yaml', range })), { type: 'reveal', uri: 'file:///a.yaml', range });
    const apply = { type: 'applyWhatIf', uri: 'file:///a.yaml', version: 7, pointer: '/machines/0/disks/0', values: { l2Cache: 2621440n, clusterSize: 65536n } };
    assert.deepEqual(decodePanelMessage(toWire(apply)), apply);
  });

  it('a panel message with a missing or mistyped field, or an unknown type, is dropped', () => {
    for (const bad of [
      { type: 'rendered', seq: 4 },
      { type: 'rendered', seq: '4', disks: 3 },
      { type: 'reveal', uri: 'file:///a.yaml', range: { ...range, line: -1 } },
      { type: 'applyWhatIf', uri: 'file:///a.yaml', version: 7, pointer: '/m', values: { l2Cache: 2621440 } },
      { type: 'applyWhatIf', uri: 42, version: 7, pointer: '/m', values: {} },
      { type: 'show', seq: 1 },
      'ready',
      null,
    ]) assert.equal(decodePanelMessage(toWire(bad)), undefined, JSON.stringify(bad));
  });

  it('the image viewer\'s messages pass, including the drawn summary and a profile choice', () => {
    assert.deepEqual(decodeViewerWebviewMessage(toWire({ type: 'rendered', seq: 2, drawn })), { type: 'rendered', seq: 2, drawn });
    assert.deepEqual(decodeViewerWebviewMessage({ type: 'profile', choice: { generation: 'legacy', platform: 'other' } }), { type: 'profile', choice: { generation: 'legacy', platform: 'other' } });
    for (const type of ['ready', 'stop', 'reread']) assert.deepEqual(decodeViewerWebviewMessage({ type }), { type });
  });

  it('an image viewer message outside the protocol is dropped', () => {
    for (const bad of [
      { type: 'profile', choice: { generation: 'future', platform: 'linux' } },
      { type: 'rendered', seq: 2, drawn: { ...drawn, state: 'half' } },
      { type: 'rendered', seq: 2, drawn: { ...drawn, theme: undefined } },
      { type: 'view' },
    ]) assert.equal(decodeViewerWebviewMessage(toWire(bad)), undefined, JSON.stringify(bad));
  });
});
