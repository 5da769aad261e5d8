// Child-process entry for study points (see src/workers/process-pool.ts).
import { serveProcessTasks } from '../workers/process-pool.js';
import { runPointTask, type PointResult, type PointTask } from './point-task.js';

serveProcessTasks<PointTask, PointResult>(runPointTask);
