import type { CalcResponse } from '@shared/measure/calc.schema';
import type { CalcIssue, CalcOutcome, CalcWorkerReply, CalcWorkerRequest } from './calc-view';

/** Options for a run: a fixed number of Monte Carlo trials, run even where the GUM would do. */
export interface RunOptions {
  trials?: number;
  forceMonteCarlo?: boolean;
}

/** The request did not pass the schema or the engine's checks; `issues` name the fields. */
export class CalcInputError extends Error {
  constructor(readonly issues: readonly CalcIssue[]) {
    super(issues.map((issue) => `${issue.path.join('.') || 'request'}: ${issue.message}`).join('; '));
    this.name = 'CalcInputError';
  }
}

/** A newer run replaced this one before it finished. */
export class CalcCancelledError extends Error {
  constructor() {
    super('replaced by a newer calculation');
    this.name = 'CalcCancelledError';
  }
}

interface Pending {
  resolve: (outcome: CalcOutcome) => void;
  reject: (error: unknown) => void;
}

/**
 * Runs calculations in one module worker. `cancel()` stops a run in progress by ending the
 * worker (a Monte Carlo loop cannot be interrupted any other way); the next run starts a new one.
 * Where module workers are missing, runs on the page instead.
 */
export class CalcWorkerRunner {
  private worker: Worker | null = null;
  private nextId = 1;
  private readonly pending = new Map<number, Pending>();

  /** A run is in progress. */
  get busy(): boolean {
    return this.pending.size > 0;
  }

  run(input: unknown, options: RunOptions = {}): Promise<CalcOutcome> {
    if (typeof Worker === 'undefined') return runHere(input, options);
    const worker = this.start();
    const id = this.nextId++;
    return new Promise<CalcOutcome>((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      const message: CalcWorkerRequest = { id, input, options };
      worker.postMessage(message);
    });
  }

  /** Ends the run in progress, if any; its promise rejects with `CalcCancelledError`. */
  cancel(): void {
    if (!this.busy) return;
    this.stop(new CalcCancelledError());
  }

  /** Ends the worker for good (on unmount). */
  dispose(): void {
    this.stop(new CalcCancelledError());
  }

  private start(): Worker {
    if (this.worker) return this.worker;
    const worker = new Worker(new URL('./calc.worker.ts', import.meta.url), { type: 'module', name: 'benchproof-calc' });
    worker.addEventListener('message', (event: MessageEvent<CalcWorkerReply>) => {
      const reply = event.data;
      const waiting = this.pending.get(reply.id);
      if (!waiting) return;
      this.pending.delete(reply.id);
      if (reply.ok) waiting.resolve(reply.outcome);
      else if ('issues' in reply) waiting.reject(new CalcInputError(reply.issues));
      else waiting.reject(new Error(`The calculator failed on this input: ${reply.failure}`));
    });
    worker.addEventListener('error', (event) => {
      event.preventDefault();
      this.stop(new Error('The calculator could not start in this browser tab. Reload the page and try again.'));
    });
    this.worker = worker;
    return worker;
  }

  private stop(reason: Error): void {
    this.worker?.terminate();
    this.worker = null;
    const waiting = [...this.pending.values()];
    this.pending.clear();
    for (const p of waiting) p.reject(reason);
  }
}

async function runHere(input: unknown, options: RunOptions): Promise<CalcOutcome> {
  const { workOut } = await import('./work-out');
  const result = workOut(input, options);
  if (result.ok) return result.outcome;
  if ('issues' in result) throw new CalcInputError(result.issues);
  throw new Error(`The calculator failed on this input: ${result.failure}`);
}

let shared: CalcWorkerRunner | null = null;

/**
 * Works out a calculator request in a module worker, as `computeCalc` would: the raw input is
 * validated there with the server's schema. Resolves with the API's response; rejects with a
 * `CalcInputError` naming the fields when the input is refused. Calls share one worker and run
 * in turn.
 */
export async function runCalcInWorker(input: unknown, options?: RunOptions): Promise<CalcResponse> {
  shared ??= new CalcWorkerRunner();
  const outcome = await shared.run(input, options);
  return outcome.response;
}
