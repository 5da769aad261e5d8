// Piscina worker entry for the server: simulations and designs run here, off the request thread
// (sweep points go to the study's process pool).
import { runSimulateTask, type SimulateTask, type SimulateTaskResult } from './simulate-task.js';
import { runDesignTask, type DesignTask, type DesignTaskResult } from './design-task.js';

export type ServerTask =
  | ({ kind: 'simulate' } & SimulateTask)
  | ({ kind: 'design' } & DesignTask);

export type ServerTaskResult = SimulateTaskResult | DesignTaskResult;

export default function serverWorker(task: ServerTask): ServerTaskResult {
  switch (task.kind) {
    case 'simulate': return runSimulateTask(task);
    case 'design': return runDesignTask(task);
  }
}
