// The HTML shell every cachewright webview uses: a strict content security policy (nothing but the
// extension's own files, scripts only with this page's nonce), one stylesheet and one script bundle.
import { randomBytes } from 'node:crypto';
import * as vscode from 'vscode';

export interface WebviewPage {
  /** Bundle under dist/, e.g. "webview.js". */
  script: string;
  /** Stylesheet under media/. */
  style: string;
  title: string;
  /** What shows until the script has drawn the page. */
  body: string;
  /** The webview UI toolkit tags a <style> element with the page's nonce: allow styles by nonce too. */
  styleNonce?: boolean;
}

export function webviewHtml(webview: vscode.Webview, extensionUri: vscode.Uri, page: WebviewPage): string {
  const nonce = randomBytes(16).toString('base64');
  const script = webview.asWebviewUri(vscode.Uri.joinPath(extensionUri, 'dist', page.script));
  const style = webview.asWebviewUri(vscode.Uri.joinPath(extensionUri, 'media', page.style));
  const csp = [
    "default-src 'none'",
    `img-src ${webview.cspSource}`,
    `font-src ${webview.cspSource}`,
    `style-src ${webview.cspSource}${page.styleNonce ? ` 'nonce-${nonce}'` : ''}`,
    `script-src 'nonce-${nonce}'`,
  ].join('; ');
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
${page.styleNonce ? `<meta property="csp-nonce" content="${nonce}">\n` : ''}<meta name="viewport" content="width=device-width, initial-scale=1.0">
<link rel="stylesheet" href="${style.toString()}">
<title>${page.title}</title>
</head>
<body>
${page.body}
<script nonce="${nonce}" src="${script.toString()}"></script>
</body>
</html>`;
}
