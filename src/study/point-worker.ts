import { runPointTask, type PointResult, type PointTask } from './point-task.js';

export default function studyPointInWorker(task: PointTask): PointResult {
  return runPointTask(task);
}
