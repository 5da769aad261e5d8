// Worker processes for the fit: the three simulations of each Jacobian run side by side.
import { ProcessPool } from '../workers/process-pool.js';
import type { TraceResult, TraceTask } from './trace-task.js';

export type TracePool = ProcessPool<TraceTask, TraceResult>;

export function createTracePool(workers: number): TracePool {
  const fromSource = import.meta.url.endsWith('.ts');
  return new ProcessPool<TraceTask, TraceResult>(new URL(`./trace-process.${fromSource ? 'ts' : 'js'}`, import.meta.url), workers);
}
