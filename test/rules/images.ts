// Real qcow2 images for the image rules' tables: written by the test writer (built from [SPEC]) into
// a temporary folder beside the definition, then read the way `cachewright lint` reads them.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { ImageFactsCache } from '../../src/image/facts-cache';
import type { LintOptions } from '../../src/lint';
import { writeImage, type ImageSpec } from '../image/qcow2-writer';

export const GiB = 1n << 30n;
export const TiB = 1n << 40n;

export class ImageFolder {
  readonly dir = mkdtempSync(path.join(tmpdir(), 'cachewright-rule-images-'));
  private readonly facts = new ImageFactsCache({ recheck: false });
  private readonly names: string[] = [];

  /** A definition file's path in the folder, so image paths in it are relative to the folder. */
  get definition(): string {
    return path.join(this.dir, 'fleet.yaml');
  }

  image(name: string, spec: Omit<ImageSpec, 'version' | 'clusters'> & Partial<Pick<ImageSpec, 'version' | 'clusters'>>): this {
    writeImage(path.join(this.dir, name), { version: 3, clusters: [], ...spec });
    this.names.push(name);
    return this;
  }

  file(name: string, bytes: string | Uint8Array): this {
    writeFileSync(path.join(this.dir, name), bytes);
    this.names.push(name);
    return this;
  }

  /** Reads every image (and the missing names too, which become "missing" facts). */
  async load(extraNames: readonly string[] = []): Promise<void> {
    await this.facts.load([...this.names, ...extraNames].map((n) => path.join(this.dir, n)));
  }

  readonly options = (): LintOptions => ({ images: this.facts.lookup });

  remove(): void {
    rmSync(this.dir, { recursive: true, force: true });
  }
}
