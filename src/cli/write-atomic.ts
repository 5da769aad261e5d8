import { rename, writeFile, unlink, realpath } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';

export class OutputPathError extends Error {}

/**
 * Writes through a temporary file in the same folder and renames it into place, so a reader
 * never sees half a file. Refuses to write over any of `inputs` (the user's scenario files).
 */
export async function writeFileAtomic(target: string, content: string, inputs: readonly string[] = []): Promise<void> {
  const targetPath = await checkOutputPath(target, inputs);
  const temporary = join(dirname(targetPath), `.${basename(targetPath)}.${process.pid}.${Date.now()}.tmp`);
  try {
    await writeFile(temporary, content, 'utf8');
    await rename(temporary, targetPath);
  } catch (error) {
    await unlink(temporary).catch(() => undefined);
    throw new OutputPathError(`${target}: cannot write the file (${(error as NodeJS.ErrnoException).code ?? (error as Error).message})`);
  }
}

/** Checks before any work is done that `target` is none of `inputs`; returns its canonical path. */
export async function checkOutputPath(target: string, inputs: readonly string[]): Promise<string> {
  const targetPath = await canonical(target);
  for (const input of inputs) {
    if ((await canonical(input)) === targetPath) {
      throw new OutputPathError(`${target}: refusing to overwrite an input file; choose another output name`);
    }
  }
  return targetPath;
}

async function canonical(path: string): Promise<string> {
  const absolute = resolve(path);
  try {
    return await realpath(absolute);
  } catch {
    // Not there yet: canonicalise the folder.
    try { return join(await realpath(dirname(absolute)), basename(absolute)); } catch { return absolute; }
  }
}
