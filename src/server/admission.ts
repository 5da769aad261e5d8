// Admission of runs: a fixed number run at once, a few more wait, and none waits for long. The
// time cap of a run starts when it gets its slot, so time spent queued never counts against it
// (two slow requests used to make every request queued behind them fail at the cap).

export class Busy extends Error {}

interface Waiter { grant: () => void; refuse: (e: Error) => void }

export class RunSlots {
  private active = 0;
  private readonly waiting: Waiter[] = [];

  constructor(readonly slots: number, readonly maxQueued: number, readonly maxWaitMs: number) {}

  get running(): number { return this.active; }
  get queued(): number { return this.waiting.length; }

  /** Resolves with a release function once a slot is free; rejects with Busy when the queue is full or the wait too long. */
  acquire(signal?: AbortSignal): Promise<() => void> {
    if (this.active < this.slots) {
      this.active++;
      return Promise.resolve(this.releaser());
    }
    if (this.waiting.length >= this.maxQueued) return Promise.reject(new Busy(`${this.active} runs in progress and ${this.waiting.length} queued`));
    return new Promise<() => void>((resolve, reject) => {
      const leave = (): void => {
        clearTimeout(timer);
        signal?.removeEventListener('abort', onAbort);
        const at = this.waiting.indexOf(waiter);
        if (at >= 0) this.waiting.splice(at, 1);
      };
      const waiter: Waiter = {
        grant: () => { leave(); this.active++; resolve(this.releaser()); },
        refuse: (e) => { leave(); reject(e); },
      };
      const timer = setTimeout(() => waiter.refuse(new Busy(`no run slot became free within ${this.maxWaitMs / 1000} s`)), this.maxWaitMs);
      const onAbort = (): void => waiter.refuse(new Error('the request was closed while queued'));
      signal?.addEventListener('abort', onAbort, { once: true });
      this.waiting.push(waiter);
    });
  }

  private releaser(): () => void {
    let released = false;
    return () => {
      if (released) return;
      released = true;
      this.active--;
      this.waiting[0]?.grant();
    };
  }
}
