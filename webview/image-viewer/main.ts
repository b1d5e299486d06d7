// The image viewer's script: receives views and progress from the extension host and draws them;
// Stop and Read again go back as messages. It reads nothing itself.
import {
  decodeViewerHostMessage, encodeViewerMessage, type ImageView, type ProfileChoice, type ViewerWebviewMessage,
} from '../../src/protocol/image-viewer';
import { renderView, updateProgress } from './render';

interface VsCodeApi {
  postMessage(message: unknown): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

const vscode = acquireVsCodeApi();
const root = document.getElementById('root') ?? document.body;
let shown: ImageView | undefined;

const post = (message: ViewerWebviewMessage): void => vscode.postMessage(encodeViewerMessage(message));
const actions = {
  stop: () => post({ type: 'stop' }),
  reread: () => post({ type: 'reread' }),
  profile: (choice: ProfileChoice) => post({ type: 'profile', choice }),
};

window.addEventListener('message', (event: MessageEvent<unknown>) => {
  const message = decodeViewerHostMessage(event.data);
  if (!message) return;
  switch (message.type) {
    case 'view': {
      shown = message.view;
      const drawn = renderView(root, message.view, actions);
      post({ type: 'rendered', seq: message.view.seq, drawn });
      break;
    }
    case 'progress':
      if (shown && shown.seq === message.seq && shown.state === 'reading') {
        shown = { ...shown, progress: message.progress };
        updateProgress(root, message.progress);
      }
      break;
  }
});

// A theme change restyles the page without a message: draw again so the host hears what it looks like.
new MutationObserver(() => {
  if (shown) post({ type: 'rendered', seq: shown.seq, drawn: renderView(root, shown, actions) });
}).observe(document.body, { attributes: true, attributeFilter: ['class'] });

post({ type: 'ready' });
