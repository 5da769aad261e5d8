// Stopping a request's runs when its page has moved on (a newer edit, a closed tab). The request
// thread sets a flag the worker threads read between cycles: the run ends with a failure nobody
// reads and the thread stays warm. Ending the thread instead (an aborted pool task) cost the next
// answer about 1.2 s while a new thread loaded and warmed.

/** What admitted work is given: the abort (time cap, or a closed request for work that cannot stop itself) and the stop flag. */
export interface WorkControl {
  signal: AbortSignal;
  /**
   * On a SharedArrayBuffer, so a worker thread sees it: set to 1 when the request closed. Runs
   * that read it (see stopRequestedBy) stop between cycles.
   */
  stopFlag: Int32Array;
}

/** The run option that reads a stop flag; none without one. */
export const stopRequestedBy = (stopFlag: Int32Array | undefined): { stopRequested?: () => boolean } =>
  (stopFlag ? { stopRequested: () => Atomics.load(stopFlag, 0) !== 0 } : {});
