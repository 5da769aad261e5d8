import { constants } from 'node:fs';
import { access, open, rename, stat, unlink, realpath } from 'node:fs/promises';
import { basename, dirname, join, resolve } from 'node:path';

export class OutputPathError extends Error {}

/** Text to write: whole, or in pieces so a large file never has to be one string in memory. */
export type Content = string | Iterable<string>;

/**
 * Writes through a temporary file in the same folder and renames it into place, so a reader
 * never sees half a file. Only a regular file (or nothing) is ever replaced: the rename would turn
 * a device or a FIFO into a plain file. Refuses to write over any of `inputs` (the user's scenario files).
 */
export async function writeFileAtomic(target: string, content: Content, inputs: readonly string[] = []): Promise<void> {
  const targetPath = await checkOutputPath(target, inputs);
  const temporary = join(dirname(targetPath), `.${basename(targetPath)}.${process.pid}.${Date.now()}.tmp`);
  try {
    const handle = await open(temporary, 'wx');
    try {
      if (typeof content === 'string') await handle.writeFile(content, 'utf8');
      else for (const piece of content) await handle.write(piece);
    } finally {
      await handle.close();
    }
    // Checked again just before the rename: something may have appeared at the path meanwhile.
    await refuseNonRegular(target, targetPath);
    await rename(temporary, targetPath);
  } catch (error) {
    await unlink(temporary).catch(() => undefined);
    if (error instanceof OutputPathError) throw error;
    throw new OutputPathError(`${target}: cannot write the file (${(error as NodeJS.ErrnoException).code ?? (error as Error).message})`);
  }
}

/**
 * Checks before any work is done that `target` can be written: not one of `inputs`, not a
 * directory, device, FIFO or socket, in an existing folder that accepts new files. Returns its
 * canonical path.
 */
export async function checkOutputPath(target: string, inputs: readonly string[]): Promise<string> {
  const targetPath = await canonical(target);
  for (const input of inputs) {
    if ((await canonical(input)) === targetPath) {
      throw new OutputPathError(`${target}: refusing to overwrite an input file: expected another output name, found the input itself`);
    }
  }
  await refuseNonRegular(target, targetPath);
  const folder = dirname(targetPath);
  let folderInfo;
  try {
    folderInfo = await stat(folder);
  } catch (error) {
    throw new OutputPathError(`${target}: expected an existing folder, found ${(error as NodeJS.ErrnoException).code ?? 'an error'} for ${folder}`);
  }
  if (!folderInfo.isDirectory()) throw new OutputPathError(`${target}: expected ${folder} to be a folder, found a file`);
  // A real probe rather than access(W_OK): root passes that on a read-only mount.
  const probe = join(folder, `.flyclamp-probe.${process.pid}.${Date.now()}.tmp`);
  try {
    await (await open(probe, 'wx')).close();
    await unlink(probe);
  } catch (error) {
    throw new OutputPathError(`${target}: expected a folder that accepts new files, found ${(error as NodeJS.ErrnoException).code ?? 'an error'} for ${folder}`);
  }
  return targetPath;
}

async function refuseNonRegular(target: string, targetPath: string): Promise<void> {
  let info;
  try {
    info = await stat(targetPath);
  } catch {
    return; // nothing there yet
  }
  if (info.isFile()) {
    // Replacing a file the user made read-only would defeat the protection they chose.
    await access(targetPath, constants.W_OK).catch(() => {
      throw new OutputPathError(`${target}: expected a writable file or a new file name, found a read-only file`);
    });
    return;
  }
  const kind = info.isDirectory() ? 'a directory' : info.isFIFO() ? 'a FIFO' : info.isSocket() ? 'a socket'
    : info.isCharacterDevice() || info.isBlockDevice() ? 'a device' : 'a special file';
  throw new OutputPathError(`${target}: expected a regular file or a new file name, found ${kind}`);
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
