// Piscina worker entry for the server: simulations, designs and sweep points run here, off the
// request thread.
import { runSimulateTask, type SimulateTask, type SimulateTaskResult } from './simulate-task.js';
import { runDesignTask, type DesignTask, type DesignTaskResult } from './design-task.js';
import { runPointTask, type PointResult, type PointTask } from '../study/point-task.js';

export type ServerTask =
  | ({ kind: 'simulate' } & SimulateTask)
  | ({ kind: 'design' } & DesignTask)
  | ({ kind: 'point' } & PointTask);

export type ServerTaskResult = SimulateTaskResult | DesignTaskResult | PointResult;

export default function serverWorker(task: ServerTask): ServerTaskResult {
  switch (task.kind) {
    case 'simulate': return runSimulateTask(task);
    case 'design': return runDesignTask(task);
    case 'point': return runPointTask(task);
  }
}
