// Child-process entry for a design's simulations (see src/workers/process-pool.ts).
import { serveProcessTasks } from '../workers/process-pool.js';
import { runDesignRunTask, type DesignRunResult, type DesignRunTask } from './design-run-task.js';

serveProcessTasks<DesignRunTask, DesignRunResult>(runDesignRunTask);
