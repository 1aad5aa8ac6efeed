import 'server-only';
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { uploadRoot } from '@/lib/factor-sets/import-service';

/*
 * A fit's uploaded table waits on disk until its job has run. Not in the upload folder itself:
 * that folder's entries are swept an hour after upload (lib/factor-sets/staging.ts), and a queued
 * fit may wait, or run, longer. The sibling folder "<UPLOAD_DIR>-fits" is on the same disk, so
 * moving an upload there is a rename.
 */

export function fitInputRoot(): string {
  return `${uploadRoot()}-fits`;
}

export function fitInputDir(fitId: string): string {
  return path.join(fitInputRoot(), fitId);
}

/** The staged table of a fit (stageMultipart names the upload's file "file"). */
export function fitInputFile(fitId: string): string {
  return path.join(fitInputDir(fitId), 'file');
}

/** Moves a staged upload folder to the fit's input folder. */
export async function keepForFit(stagedDir: string, fitId: string): Promise<void> {
  await fs.mkdir(fitInputRoot(), { recursive: true, mode: 0o700 });
  const target = fitInputDir(fitId);
  try {
    await fs.rename(stagedDir, target);
  } catch (error) {
    // Another disk (UPLOAD_DIR on a mount of its own): copy, then remove the original.
    if ((error as NodeJS.ErrnoException).code !== 'EXDEV') throw error;
    await fs.cp(stagedDir, target, { recursive: true });
    await fs.rm(stagedDir, { recursive: true, force: true });
  }
}

export async function discardFitInput(fitId: string): Promise<void> {
  await fs.rm(fitInputDir(fitId), { recursive: true, force: true }).catch((error: unknown) => console.error(`fit ${fitId}: could not remove its input`, error));
}
