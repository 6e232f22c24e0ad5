/**
 * The engine call behind the worker: validate, evaluate, and answer in plain JSON. Also run on
 * the page itself where a browser has no module workers.
 */
import { ZodError } from 'zod';
import { evaluateCalc, parseCalcRequest, resultText, toCalcResponse, type CalcEvaluation, type EvaluateOptions } from '@shared/measure/calc';
import { numericalTolerance } from '@shared/measure/coverage';
import type { CalcIssue, CalcOutcome, CalcView } from './calc-view';

function viewOf(evaluation: CalcEvaluation): CalcView {
  const [low, high] = evaluation.interval;
  const y = evaluation.value.valueOf();
  // The engine's own test for "asymmetric" (Monte Carlo ends carry sampling noise).
  const tolerance = Math.max(numericalTolerance(evaluation.standardUncertainty), 1e-12 * Math.max(1, Math.abs(y)));
  return {
    band: evaluation.band ? { ...evaluation.band } : null,
    limits: evaluation.judgement ? { ...evaluation.judgement.limits } : null,
    rule: evaluation.judgement?.rule ?? null,
    ruleText: evaluation.judgement?.ruleText ?? null,
    rejectSide: evaluation.rejectJudgement?.side ?? null,
    valueDecimals: evaluation.valueDecimals,
    asymmetric: Math.abs(y - low - (high - y)) > tolerance,
    resultText: resultText(evaluation),
  };
}

/** The outcome of one request, or its problems by field, or the engine's failure in words. */
export type WorkedOut = { ok: true; outcome: CalcOutcome } | { ok: false; issues: CalcIssue[] } | { ok: false; failure: string };

/** Validates `input` with the server's schema and works it out. Never throws. */
export function workOut(input: unknown, options: EvaluateOptions = {}): WorkedOut {
  try {
    const evaluation = evaluateCalc(parseCalcRequest(input), options);
    return { ok: true, outcome: { response: toCalcResponse(evaluation), view: viewOf(evaluation) } };
  } catch (error) {
    if (error instanceof ZodError) {
      return { ok: false, issues: error.issues.map((issue) => ({ path: issue.path.map((p) => (typeof p === 'number' ? p : String(p))), message: issue.message })) };
    }
    return { ok: false, failure: error instanceof Error ? error.message : String(error) };
  }
}
