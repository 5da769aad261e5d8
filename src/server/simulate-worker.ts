// Piscina worker entry: simulations run here, off the request thread.
import { runSimulateTask, type SimulateTask, type SimulateTaskResult } from './simulate-task.js';

export default function simulateInWorker(task: SimulateTask): SimulateTaskResult {
  return runSimulateTask(task);
}
