// Child-process entry for the fit's simulations (see src/workers/process-pool.ts).
import { serveProcessTasks } from '../workers/process-pool.js';
import { runTraceTask, type TraceResult, type TraceTask } from './trace-task.js';

serveProcessTasks<TraceTask, TraceResult>(runTraceTask);
