import { useEffect, useRef, useState } from 'react';
import type { CalcRequest } from '@shared/measure/calc.schema';
import type { CalcIssue, CalcOutcome } from './calc-view';
import { CalcCancelledError, CalcInputError, CalcWorkerRunner } from './run-calc-in-worker';

/** Where the live calculation stands. `working` keeps the last outcome to show, dimmed, meanwhile. */
export type LiveCalc =
  | { status: 'idle' }
  | { status: 'working'; previous: { outcome: CalcOutcome; request: CalcRequest } | null }
  | { status: 'done'; outcome: CalcOutcome; request: CalcRequest }
  | { status: 'refused'; issues: readonly CalcIssue[] }
  | { status: 'failed'; error: unknown };

/** Typing pauses shorter than this do not start a run. */
const SETTLE_MS = 120;

/**
 * Works `request` out in a module worker whenever it changes. A newer request cancels a run still
 * in progress (the worker is ended and a fresh one started), so a long Monte Carlo run never
 * holds up the answer to what is on the screen now.
 */
export function useLiveCalc(request: CalcRequest | null): { state: LiveCalc; retry: () => void } {
  const runner = useRef<CalcWorkerRunner | null>(null);
  const [state, setState] = useState<LiveCalc>({ status: 'idle' });
  const [attempt, setAttempt] = useState(0);
  const key = request ? JSON.stringify(request) : null;

  useEffect(() => {
    runner.current ??= new CalcWorkerRunner();
    const r = runner.current;
    return () => {
      r.dispose();
      runner.current = null;
    };
  }, []);

  useEffect(() => {
    if (key === null || request === null) {
      runner.current?.cancel();
      setState({ status: 'idle' });
      return;
    }
    let current = true;
    setState((before) => ({
      status: 'working',
      previous: before.status === 'done' ? { outcome: before.outcome, request: before.request } : before.status === 'working' ? before.previous : null,
    }));
    const timer = setTimeout(() => {
      runner.current ??= new CalcWorkerRunner();
      const r = runner.current;
      r.cancel();
      r.run(request).then(
        (outcome) => current && setState({ status: 'done', outcome, request }),
        (error: unknown) => {
          if (!current || error instanceof CalcCancelledError) return;
          setState(error instanceof CalcInputError ? { status: 'refused', issues: error.issues } : { status: 'failed', error });
        },
      );
    }, SETTLE_MS);
    return () => {
      current = false;
      clearTimeout(timer);
    };
    // `key` stands for `request`'s content: a new object with the same figures is not a new run.
  }, [key, attempt]);

  return { state, retry: () => setAttempt((n) => n + 1) };
}
