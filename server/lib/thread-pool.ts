import { Worker, type ResourceLimits, type Transferable } from 'node:worker_threads';

/**
 * A few worker threads that run one job each at a time, for CPU-bound work that must not stall
 * the server's event loop. Threads start on demand, do not keep the process alive while idle, and
 * are replaced when they die. A job that outlives `timeoutMs` has its thread terminated (the only
 * way to stop synchronous JavaScript) and fails with `ThreadTimeout`; a thread that dies (out of
 * memory under `resourceLimits`, an uncaught error) fails its job with `ThreadDied` — neither can
 * take the server down.
 *
 * The thread's script answers each `{ id, job }` message with `{ id, answer }` or `{ id, error }`.
 */
export class ThreadTimeout extends Error {}
export class ThreadDied extends Error {
  constructor(
    message: string,
    readonly outOfMemory: boolean,
  ) {
    super(message);
  }
}

type Slot = { worker: Worker; busy: { id: number; resolve: (a: unknown) => void; reject: (e: Error) => void; timer: NodeJS.Timeout } | null };
type Queued = { id: number; job: unknown; transfer: Transferable[]; resolve: (a: unknown) => void; reject: (e: Error) => void };
export type ThreadMessage<J> = { id: number; job: J };
export type ThreadAnswer<A> = { id: number; answer: A } | { id: number; error: string };

export class ThreadPool<Job, Answer> {
  private slots: Slot[] = [];
  private queue: Queued[] = [];
  private nextId = 1;

  constructor(
    private readonly opts: { script: string; size: number; timeoutMs: number; name: string; resourceLimits?: ResourceLimits },
  ) {}

  /** Runs `job` on a free thread (queued while all are busy); `transfer` moves buffers instead of copying them. */
  run(job: Job, transfer: Transferable[] = []): Promise<Answer> {
    return new Promise<Answer>((resolve, reject) => {
      this.queue.push({ id: this.nextId++, job, transfer, resolve: resolve as (a: unknown) => void, reject });
      this.dispatch();
    });
  }

  /** Threads running now (for tests). */
  get threads(): number {
    return this.slots.length;
  }

  /** Ends every thread; queued and running jobs fail. A later `run` starts new threads. */
  async stop(): Promise<void> {
    const slots = this.slots;
    this.slots = [];
    for (const q of this.queue.splice(0)) q.reject(new ThreadDied(`${this.opts.name} stopped`, false));
    await Promise.all(
      slots.map(async (s) => {
        if (s.busy) {
          clearTimeout(s.busy.timer);
          s.busy.reject(new ThreadDied(`${this.opts.name} stopped`, false));
          s.busy = null;
        }
        await s.worker.terminate();
      }),
    );
  }

  private dispatch() {
    while (this.queue.length) {
      let slot = this.slots.find((s) => !s.busy);
      if (!slot && this.slots.length < this.opts.size) slot = this.spawn();
      if (!slot) return;
      const q = this.queue.shift()!;
      const timer = setTimeout(() => this.timeOut(slot!), this.opts.timeoutMs);
      slot.busy = { id: q.id, resolve: q.resolve, reject: q.reject, timer };
      // A thread at work keeps the process alive (a server shutting down waits for the answer).
      slot.worker.ref();
      slot.worker.postMessage({ id: q.id, job: q.job } satisfies ThreadMessage<unknown>, q.transfer);
    }
  }

  private spawn(): Slot {
    const worker = new Worker(this.opts.script, this.opts.resourceLimits ? { resourceLimits: this.opts.resourceLimits } : {});
    worker.unref();
    const slot: Slot = { worker, busy: null };
    worker.on('message', (a: ThreadAnswer<Answer>) => {
      const busy = slot.busy;
      if (!busy || busy.id !== a.id) return;
      clearTimeout(busy.timer);
      slot.busy = null;
      worker.unref();
      if ('error' in a) busy.reject(new Error(a.error));
      else busy.resolve(a.answer);
      this.dispatch();
    });
    let reason = '';
    worker.on('error', (e: Error & { code?: string }) => {
      reason = e.code === 'ERR_WORKER_OUT_OF_MEMORY' ? 'out of memory' : e.message;
    });
    worker.on('exit', (code) => this.died(slot, reason || `exit code ${code}`));
    this.slots.push(slot);
    return slot;
  }

  private died(slot: Slot, reason: string) {
    const i = this.slots.indexOf(slot);
    if (i >= 0) this.slots.splice(i, 1);
    const busy = slot.busy;
    slot.busy = null;
    if (busy) {
      clearTimeout(busy.timer);
      busy.reject(new ThreadDied(`${this.opts.name} stopped: ${reason}`, reason === 'out of memory'));
    }
    this.dispatch();
  }

  private timeOut(slot: Slot) {
    const busy = slot.busy;
    if (!busy) return;
    slot.busy = null;
    const i = this.slots.indexOf(slot);
    if (i >= 0) this.slots.splice(i, 1);
    busy.reject(new ThreadTimeout(`${this.opts.name} took longer than ${this.opts.timeoutMs / 1000} s`));
    void slot.worker.terminate();
    this.dispatch();
  }
}
