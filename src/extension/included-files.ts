// The definition files a mapping file includes below its folder: the workspace's, or those of a
// revision extracted for a review. The mapping decides; the walk only proposes candidates.
import * as path from 'node:path';
import * as vscode from 'vscode';
// Loaded through require so the bundle takes the package's CommonJS build.
import tinyglobby = require('tinyglobby');
import type { Mapping } from '../lint';

export async function includedFiles(mapping: Mapping): Promise<vscode.Uri[]> {
  const globs = mapping.file.include && mapping.file.include.length > 0 ? mapping.file.include : ['**/*.{yaml,yml,json}'];
  const paths = await tinyglobby.glob(globs, { cwd: mapping.dir, absolute: true, ignore: ['**/node_modules/**', '**/.git/**'] });
  return paths.map((file) => vscode.Uri.file(path.normalize(file))).filter((uri) => mapping.includes(uri.fsPath) && uri.fsPath !== mapping.path);
}
