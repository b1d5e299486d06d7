// The read-only custom editor for qcow2 images: one ImageDocument per file, any number of webviews
// on it. The webview gets a strict content security policy (the extension's own resources only,
// its script by nonce) and talks to the host only through ./protocol.
import * as vscode from 'vscode';
import { webviewHtml } from '../webview-page';
import { ImageDocument } from './document';
import {
  decodeViewerWebviewMessage, encodeViewerMessage, type ProfileChoice, type ViewerHostMessage, type ViewerSnapshot,
} from '../../protocol/image-viewer';
import { DRIVER_GENERATIONS, HOST_PLATFORMS } from '../../core/profiles';

function isProfileChoice(value: unknown): value is ProfileChoice {
  const v = value as Partial<ProfileChoice> | null;
  return typeof v === 'object' && v !== null
    && DRIVER_GENERATIONS.includes(v.generation as ProfileChoice['generation'])
    && HOST_PLATFORMS.includes(v.platform as ProfileChoice['platform']);
}

export const IMAGE_VIEW_TYPE = 'cachewright.qcow2Image';

export class ImageViewerProvider implements vscode.CustomReadonlyEditorProvider<ImageDocument> {
  private readonly documents = new Set<ImageDocument>();
  /** The document of the webview that was active last, for the stop/reread commands. */
  private active: ImageDocument | undefined;
  /** Documents whose next walk stops at its first progress report (tests), by URI. */
  private readonly stopArmed = new Set<string>();

  constructor(private readonly extensionUri: vscode.Uri) {}

  openCustomDocument(uri: vscode.Uri, _context: vscode.CustomDocumentOpenContext, token: vscode.CancellationToken): ImageDocument {
    const document = new ImageDocument(uri);
    // The editor gave up opening it (closed at once, another editor chosen): stop the walk too.
    token.onCancellationRequested(() => document.stop());
    this.documents.add(document);
    document.onDidDispose(() => {
      this.documents.delete(document);
      if (this.active === document) this.active = undefined;
    });
    if (this.stopArmed.delete(uri.toString())) document.armStopAtFirstProgress();
    // Reading starts at once and never holds up the editor: the webview shows the walk as it runs.
    void document.read();
    return document;
  }

  resolveCustomEditor(document: ImageDocument, panel: vscode.WebviewPanel): void {
    const roots = [vscode.Uri.joinPath(this.extensionUri, 'dist'), vscode.Uri.joinPath(this.extensionUri, 'media')];
    panel.webview.options = { enableScripts: true, localResourceRoots: roots };
    panel.webview.html = this.html(panel.webview);
    const post = (message: ViewerHostMessage): void => void panel.webview.postMessage(encodeViewerMessage(message));
    const subscriptions: vscode.Disposable[] = [
      document.listen({
        view: (view) => post({ type: 'view', view }),
        progress: (seq, progress) => post({ type: 'progress', seq, progress }),
      }),
      panel.webview.onDidReceiveMessage((raw: unknown) => {
        const message = decodeViewerWebviewMessage(raw);
        if (!message) return;
        switch (message.type) {
          case 'ready':
            post({ type: 'view', view: document.current });
            break;
          case 'rendered':
            // Only the newest view counts: an older one drawn late says nothing about the current one.
            if (message.seq === document.current.seq) document.lastDrawn = { view: document.current, drawn: message.drawn };
            break;
          case 'stop':
            document.stop();
            break;
          case 'reread':
            void document.reread();
            break;
          case 'profile':
            if (isProfileChoice(message.choice)) document.setProfile(message.choice);
            break;
        }
      }),
      panel.onDidChangeViewState(() => {
        if (panel.active) this.active = document;
      }),
    ];
    if (panel.active) this.active = document;
    this.active ??= document;
    panel.onDidDispose(() => {
      for (const s of subscriptions) s.dispose();
    });
  }

  private find(uri?: string): ImageDocument | undefined {
    if (uri === undefined) return this.active;
    return [...this.documents].find((d) => d.uri.toString() === uri);
  }

  /** Test hook: what the webview drew last for an image (the active one when no URI is given). */
  snapshot(uri?: string): ViewerSnapshot | undefined {
    const document = this.find(uri);
    if (!document || !document.lastDrawn) return undefined;
    return { ...document.lastDrawn, viewsPosted: document.viewsPosted, progressReports: document.progressReports };
  }

  stop(uri?: string): boolean {
    const document = this.find(uri);
    if (!document || !document.reading) return false;
    document.stop();
    return true;
  }

  reread(uri?: string): Promise<void> | undefined {
    return this.find(uri)?.reread();
  }

  setProfile(uri: string | undefined, choice: ProfileChoice): boolean {
    const document = this.find(uri);
    if (!document || !isProfileChoice(choice)) return false;
    document.setProfile(choice);
    return true;
  }

  armStop(uri: string): void {
    const open = this.find(uri);
    if (open) open.armStopAtFirstProgress();
    else this.stopArmed.add(uri);
  }

  /** The workspace was trusted after images were opened: read them now. */
  readUntrusted(): void {
    for (const document of this.documents) if (document.current.state === 'untrusted') void document.read();
  }

  private html(webview: vscode.Webview): string {
    return webviewHtml(webview, this.extensionUri, {
      script: 'image-viewer.js',
      style: 'image-viewer.css',
      title: 'qcow2 image',
      body: '<main id="root" aria-live="polite"><p class="muted">Reading the image header…</p></main>',
    });
  }
}
