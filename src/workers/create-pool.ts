// Worker pools for simulations (server requests, sweep points). Under tsx or vitest the code
// runs from .ts sources, and the worker must then be started with tsx too.

import { Piscina } from 'piscina';
import { availableParallelism } from 'node:os';

export interface PoolOptions {
  maxThreads?: number;
  /** Threads kept alive even when idle (0 by default: started on demand, stopped after idleTimeoutMs). */
  minThreads?: number;
  idleTimeoutMs?: number;
  /** Old-generation heap ceiling per worker thread, MB: a worker over it dies alone, the process lives. */
  maxHeapMb?: number;
}

/** `callerUrl` is the caller's import.meta.url; the worker file sits beside it as `workerBaseName`.js (or .ts). */
export function createPool<Task, Result>(callerUrl: string, workerBaseName: string, options: PoolOptions = {}): Piscina<Task, Result> {
  const fromSource = callerUrl.endsWith('.ts');
  const filename = new URL(`./${workerBaseName}${fromSource ? '.ts' : '.js'}`, callerUrl).pathname;
  const pool = new Piscina<Task, Result>({
    filename: decodeURIComponent(filename),
    ...(fromSource ? { execArgv: ['--import', 'tsx'] } : {}),
    minThreads: options.minThreads ?? 0,
    maxThreads: options.maxThreads ?? Math.max(1, availableParallelism()),
    idleTimeout: options.idleTimeoutMs ?? 30_000,
    resourceLimits: { maxYoungGenerationSizeMb: 128, ...(options.maxHeapMb ? { maxOldGenerationSizeMb: options.maxHeapMb } : {}) },
  });
  // A worker that fails outside a task (out of memory while starting) is reported on the pool;
  // unheard, that event would end the whole process. Piscina starts another worker.
  pool.on('error', (error: Error) => process.stderr.write(`flyclamp: a worker thread failed: ${error.message}\n`));
  return pool;
}
