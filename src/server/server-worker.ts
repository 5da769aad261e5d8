// Piscina worker entry for the server: simulations and designs run here, off the request thread
// (sweep points go to the study's process pool).
import { runOperatingPointTask, runSimulateTask, type OperatingPointTask, type OperatingPointTaskResult, type SimulateTask, type SimulateTaskResult } from './simulate-task.js';
import { runDesignTask, type DesignTask, type DesignTaskResult } from './design-task.js';
import { runCaptureTask, type CaptureTask, type CaptureTaskResult } from './fit-task.js';
import { runWarmUpTask, type WarmUpTaskResult } from './warm-up-task.js';

export type ServerTask =
  | ({ kind: 'simulate' } & SimulateTask)
  | ({ kind: 'operating-point' } & OperatingPointTask)
  | ({ kind: 'design' } & DesignTask)
  | ({ kind: 'capture' } & CaptureTask)
  | { kind: 'warm-up' };

export type ServerTaskResult = SimulateTaskResult | OperatingPointTaskResult | DesignTaskResult | CaptureTaskResult | WarmUpTaskResult;

export default function serverWorker(task: ServerTask): ServerTaskResult | Promise<ServerTaskResult> {
  switch (task.kind) {
    case 'simulate': return runSimulateTask(task);
    case 'operating-point': return runOperatingPointTask(task);
    case 'design': return runDesignTask(task);
    case 'capture': return runCaptureTask(task);
    case 'warm-up': return runWarmUpTask();
  }
}
