// The sizing panel's script: registers the toolkit's components, receives views from the extension
// host and draws them; what-if trials recompute here with the pure engine.
import { decodeHostMessage, encodeMessage, type PanelMessage, type PanelView } from '../src/protocol/panel';
import { renderEmpty, renderPanel, type PanelActions, type WhatIfState } from './render';

interface VsCodeApi {
  postMessage(message: unknown): void;
  getState(): unknown;
  setState(state: unknown): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

// The toolkit ships only as an ES module; a dynamic import keeps this file's module kind and is
// inlined by the bundler. Views that arrive before it is ready still render and upgrade in place.
void import('@vscode/webview-ui-toolkit').then((toolkit) => {
  toolkit.provideVSCodeDesignSystem().register(
    toolkit.vsCodeButton(), toolkit.vsCodeDivider(), toolkit.vsCodeDropdown(), toolkit.vsCodeLink(),
    toolkit.vsCodeOption(), toolkit.vsCodeTextField(),
  );
});

const vscode = acquireVsCodeApi();
const root = document.getElementById('root') ?? document.body;
const trials: WhatIfState = new Map();
let current: { view: PanelView; seq: number } | undefined;
/** The disk the user picked in the panel or put the editor's cursor in; its card carries the curve. */
let selected: string | undefined;

const post = (message: PanelMessage): void => vscode.postMessage(encodeMessage(message));

const actions: PanelActions = {
  reveal(target) {
    if (current) post({ type: 'reveal', uri: target.uri ?? current.view.uri, range: target.range });
  },
  apply(disk, values) {
    if (current) post({ type: 'applyWhatIf', uri: current.view.uri, version: current.view.version, pointer: disk.pointer, values });
  },
  changed() {
    if (current) draw(current.view, current.seq);
  },
  select(pointer) {
    selected = pointer;
  },
};

function draw(view: PanelView, seq: number): void {
  const disks = renderPanel(root, view, trials, actions, selected);
  post({ type: 'rendered', seq, disks });
}

let lastUri: string | undefined;
window.addEventListener('message', (event: MessageEvent<unknown>) => {
  const message = decodeHostMessage(event.data);
  if (!message) return;
  switch (message.type) {
    case 'show':
      // Trials belong to one file's disks; another file starts clean.
      if (message.view.uri !== lastUri) {
        trials.clear();
        selected = undefined;
      }
      lastUri = message.view.uri;
      for (const pointer of [...trials.keys()]) {
        if (!message.view.machines.some((m) => m.disks.some((d) => d.pointer === pointer))) trials.delete(pointer);
      }
      current = { view: message.view, seq: message.seq };
      draw(message.view, message.seq);
      break;
    case 'empty':
      current = undefined;
      renderEmpty(root, message.reason);
      post({ type: 'rendered', seq: message.seq, disks: 0 });
      break;
    case 'focusDisk': {
      if (current && selected !== message.pointer) {
        selected = message.pointer;
        draw(current.view, current.seq);
      }
      const card = Array.from(document.querySelectorAll<HTMLElement>('article.disk')).find((c) => c.dataset.pointer === message.pointer);
      if (card) {
        for (const other of Array.from(document.querySelectorAll('article.disk.focused'))) other.classList.remove('focused');
        card.classList.add('focused');
        card.scrollIntoView({ block: 'nearest' });
      }
      break;
    }
    case 'applied': {
      const note = document.createElement('p');
      note.className = message.ok ? 'applied' : 'applied failed';
      note.textContent = message.message;
      root.prepend(note);
      if (message.ok) trials.clear();
      break;
    }
  }
});

post({ type: 'ready' });
