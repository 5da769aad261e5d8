// A small pool of child processes for CPU-bound batches (sweep points). On this machine class two
// processes scale to about 1.9× where two worker threads of one process reach about 1.3–1.5×
// (measured in `npm run bench`): the threads share one V8 platform and its GC helpers, and the
// integrator allocates on every step.

import { fork, type ChildProcess } from 'node:child_process';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';

interface Pending<Task, Result> {
  id: number;
  task: Task;
  resolve: (r: Result) => void;
  reject: (e: Error) => void;
  /** Stops watching its signal; called once the task is settled, so listeners never pile up. */
  release: () => void;
}

/** Heap ceiling of each child, MB: a point's recording is at most 29 MB (the recorded-sample budget). */
const CHILD_HEAP_MB = 512;
/** How long `destroy` lets a busy child finish before it is killed, ms. */
const DESTROY_GRACE_MS = 2_000;
/** Children that die in a row without finishing a task before the pool gives up replacing them. */
const MAX_CONSECUTIVE_DEATHS = 5;

export class ProcessPool<Task, Result> {
  private readonly idle: ChildProcess[] = [];
  private readonly all = new Set<ChildProcess>();
  private readonly queue: Array<Pending<Task, Result>> = [];
  private readonly running = new Map<ChildProcess, Pending<Task, Result>>();
  private nextId = 0;
  private closed = false;
  private consecutiveDeaths = 0;
  /** Children killed to stop a cancelled task: their death is no sign of trouble. */
  private readonly stopped = new WeakSet<ChildProcess>();
  private readonly fromSource: boolean;

  /** `entryUrl`: the child's module (a file that calls `serveProcessTasks`). */
  constructor(private readonly entryUrl: URL, readonly size = availableParallelism()) {
    this.fromSource = entryUrl.pathname.endsWith('.ts');
    for (let i = 0; i < Math.max(1, size); i++) this.spawn();
  }

  /** The pool can no longer run tasks (destroyed, or its children keep dying); make a new one. */
  get broken(): boolean {
    return this.closed || this.consecutiveDeaths >= MAX_CONSECUTIVE_DEATHS;
  }

  /** Process ids of the children, for tests and diagnostics. */
  get pids(): number[] {
    return [...this.all].map((c) => c.pid).filter((p): p is number => p !== undefined);
  }

  private spawn(): void {
    const child = fork(fileURLToPath(this.entryUrl), [], {
      // A heap ceiling per child: a point that grows past it ends its own process, not the machine.
      execArgv: [...(this.fromSource ? ['--import', 'tsx'] : []), `--max-old-space-size=${CHILD_HEAP_MB}`],
      stdio: ['ignore', 'ignore', 'inherit', 'ipc'],
    });
    child.on('message', (message: { id: number; result?: Result; error?: string }) => this.finished(child, message));
    // Without a listener an 'error' (a failed spawn, a send to a dead child) would crash the parent.
    child.on('error', () => this.lost(child, null));
    child.on('exit', (code) => this.lost(child, code));
    this.all.add(child);
    this.idle.push(child);
  }

  run(task: Task, signal?: AbortSignal): Promise<Result> {
    if (this.broken) return Promise.reject(new Error(this.closed ? 'the process pool is closed' : 'the worker processes keep failing'));
    if (signal?.aborted) return Promise.reject(new Error('aborted'));
    return new Promise<Result>((resolve, reject) => {
      const pending: Pending<Task, Result> = {
        id: this.nextId++, task,
        resolve: (r) => { pending.release(); resolve(r); },
        reject: (e) => { pending.release(); reject(e); },
        release: () => { if (signal) this.unwatch(signal, pending); },
      };
      if (signal) this.watch(signal, pending);
      this.queue.push(pending);
      this.dispatch();
    });
  }

  /**
   * One abort listener per signal, however many of its tasks are waiting (a study queues hundreds
   * under one signal: a listener each set off MaxListenersExceededWarning); removed with the last task.
   */
  private readonly watched = new Map<AbortSignal, { tasks: Set<Pending<Task, Result>>; onAbort: () => void }>();

  private watch(signal: AbortSignal, pending: Pending<Task, Result>): void {
    let entry = this.watched.get(signal);
    if (!entry) {
      const tasks = new Set<Pending<Task, Result>>();
      entry = { tasks, onAbort: () => { for (const p of [...tasks]) this.cancel(p); } };
      this.watched.set(signal, entry);
      signal.addEventListener('abort', entry.onAbort, { once: true });
    }
    entry.tasks.add(pending);
  }

  private unwatch(signal: AbortSignal, pending: Pending<Task, Result>): void {
    const entry = this.watched.get(signal);
    if (!entry?.tasks.delete(pending) || entry.tasks.size > 0) return;
    signal.removeEventListener('abort', entry.onAbort);
    this.watched.delete(signal);
  }

  /** A cancelled task stops: dropped from the queue, or its child killed (and replaced) mid-run. */
  private cancel(pending: Pending<Task, Result>): void {
    const at = this.queue.indexOf(pending);
    if (at >= 0) {
      this.queue.splice(at, 1);
      pending.reject(new Error('aborted'));
      return;
    }
    for (const [child, p] of this.running) {
      if (p !== pending) continue;
      this.running.delete(child);
      pending.reject(new Error('aborted'));
      this.stopped.add(child);
      child.kill('SIGKILL'); // 'exit' replaces it
    }
  }

  private dispatch(): void {
    while (this.idle.length > 0 && this.queue.length > 0) {
      const child = this.idle.pop()!;
      const pending = this.queue.shift()!;
      this.running.set(child, pending);
      child.send({ id: pending.id, task: pending.task }, (error) => {
        if (error) this.lost(child, null);
      });
    }
  }

  private finished(child: ChildProcess, message: { id: number; result?: Result; error?: string }): void {
    const pending = this.running.get(child);
    if (!pending || pending.id !== message.id) return;
    this.consecutiveDeaths = 0;
    this.running.delete(child);
    this.idle.push(child);
    if (message.error !== undefined) pending.reject(new Error(message.error));
    else pending.resolve(message.result as Result);
    this.dispatch();
  }

  private lost(child: ChildProcess, code: number | null): void {
    if (!this.all.delete(child)) return; // 'error' and 'exit' may both report one death
    const pending = this.running.get(child);
    this.running.delete(child);
    const at = this.idle.indexOf(child);
    if (at >= 0) this.idle.splice(at, 1);
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
    if (pending) pending.reject(new Error(`a worker process exited (${code === null ? `signal ${child.signalCode ?? 'none'}` : `code ${code}`}) while running a task`));
    if (this.closed) return;
    if (!this.stopped.has(child)) this.consecutiveDeaths++;
    if (this.broken) {
      for (const p of this.queue.splice(0)) p.reject(new Error('the worker processes keep failing'));
      return;
    }
    this.spawn();
    this.dispatch();
  }

  async destroy(): Promise<void> {
    this.closed = true;
    for (const p of this.queue.splice(0)) p.reject(new Error('the process pool is closed'));
    await Promise.all([...this.all].map((child) => new Promise<void>((ok) => {
      if (child.exitCode !== null || child.signalCode !== null) { ok(); return; }
      // A child busy with a long point reads the disconnect only when it finishes: kill it after a grace.
      const kill = setTimeout(() => child.kill('SIGKILL'), DESTROY_GRACE_MS);
      child.once('exit', () => { clearTimeout(kill); ok(); });
      if (child.connected) child.disconnect();
    })));
    for (const [, p] of this.running) p.reject(new Error('the process pool is closed'));
    this.running.clear();
  }
}

/** In a child: answer each task with `handle`; Ctrl-C is the parent's to handle; leave with the parent. */
export function serveProcessTasks<Task, Result>(handle: (task: Task) => Result): void {
  process.on('SIGINT', () => undefined);
  process.on('disconnect', () => process.exit(0));
  // A parent that left while a task ran (a design stopped at its deadline) cannot be answered: the
  // answer is dropped quietly instead of an EPIPE stack trace on the user's terminal.
  const answer = (reply: { id: number; result?: Result; error?: string }): void => {
    if (process.connected) process.send!(reply, undefined, {}, () => undefined);
  };
  process.on('message', (message: { id: number; task: Task }) => {
    let reply: { id: number; result?: Result; error?: string };
    try {
      reply = { id: message.id, result: handle(message.task) };
    } catch (error) {
      reply = { id: message.id, error: (error as Error).message };
    }
    answer(reply);
  });
}
