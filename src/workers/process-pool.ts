// A small pool of child processes for CPU-bound batches (sweep points). On this machine class two
// processes scale to about 1.9× where two worker threads of one process reach about 1.3–1.5×
// (measured in `npm run bench`): the threads share one V8 platform and its GC helpers, and the
// integrator allocates on every step.

import { fork, type ChildProcess } from 'node:child_process';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';

interface Pending<Task, Result> { id: number; task: Task; resolve: (r: Result) => void; reject: (e: Error) => void }

export class ProcessPool<Task, Result> {
  private readonly idle: ChildProcess[] = [];
  private readonly all: ChildProcess[] = [];
  private readonly queue: Array<Pending<Task, Result>> = [];
  private readonly running = new Map<ChildProcess, Pending<Task, Result>>();
  private nextId = 0;
  private closed = false;

  /** `entryUrl`: the child's module (a file that calls `serveProcessTasks`). */
  constructor(entryUrl: URL, size = availableParallelism()) {
    const fromSource = entryUrl.pathname.endsWith('.ts');
    for (let i = 0; i < Math.max(1, size); i++) {
      const child = fork(fileURLToPath(entryUrl), [], {
        execArgv: fromSource ? ['--import', 'tsx'] : [],
        stdio: ['ignore', 'ignore', 'inherit', 'ipc'],
      });
      child.on('message', (message: { id: number; result?: Result; error?: string }) => this.finished(child, message));
      child.on('exit', (code) => this.lost(child, code));
      this.all.push(child);
      this.idle.push(child);
    }
  }

  run(task: Task, signal?: AbortSignal): Promise<Result> {
    if (this.closed) return Promise.reject(new Error('the process pool is closed'));
    return new Promise<Result>((resolve, reject) => {
      const pending: Pending<Task, Result> = { id: this.nextId++, task, resolve, reject };
      signal?.addEventListener('abort', () => {
        const at = this.queue.indexOf(pending);
        if (at >= 0) { this.queue.splice(at, 1); reject(new Error('aborted')); }
      }, { once: true });
      this.queue.push(pending);
      this.dispatch();
    });
  }

  private dispatch(): void {
    while (this.idle.length > 0 && this.queue.length > 0) {
      const child = this.idle.pop()!;
      const pending = this.queue.shift()!;
      this.running.set(child, pending);
      child.send({ id: pending.id, task: pending.task });
    }
  }

  private finished(child: ChildProcess, message: { id: number; result?: Result; error?: string }): void {
    const pending = this.running.get(child);
    if (!pending || pending.id !== message.id) return;
    this.running.delete(child);
    this.idle.push(child);
    if (message.error !== undefined) pending.reject(new Error(message.error));
    else pending.resolve(message.result as Result);
    this.dispatch();
  }

  private lost(child: ChildProcess, code: number | null): void {
    const pending = this.running.get(child);
    this.running.delete(child);
    const at = this.idle.indexOf(child);
    if (at >= 0) this.idle.splice(at, 1);
    if (pending) pending.reject(new Error(`a worker process exited (code ${code ?? 'none'}) while running a task`));
    if (!this.closed && this.idle.length === 0 && this.running.size === 0) {
      for (const p of this.queue.splice(0)) p.reject(new Error('no worker processes left'));
    }
  }

  async destroy(): Promise<void> {
    this.closed = true;
    for (const p of this.queue.splice(0)) p.reject(new Error('the process pool is closed'));
    await Promise.all(this.all.map((child) => new Promise<void>((ok) => {
      if (child.exitCode !== null || child.signalCode !== null) { ok(); return; }
      child.once('exit', () => ok());
      child.disconnect();
    })));
  }
}

/** In a child: answer each task with `handle`; Ctrl-C is the parent's to handle; leave with the parent. */
export function serveProcessTasks<Task, Result>(handle: (task: Task) => Result): void {
  process.on('SIGINT', () => undefined);
  process.on('disconnect', () => process.exit(0));
  process.on('message', (message: { id: number; task: Task }) => {
    try {
      process.send!({ id: message.id, result: handle(message.task) });
    } catch (error) {
      process.send!({ id: message.id, error: (error as Error).message });
    }
  });
}
