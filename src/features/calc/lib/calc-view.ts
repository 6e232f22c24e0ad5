import type { CalcResponse } from '@shared/measure/calc.schema';
import type { DecisionRule } from '@shared/measure/spec';

/**
 * What the page draws beyond the API's response: the spec's figures and the decision limits in
 * the result's unit, the rule, and how to show the value. Plain JSON, worked out beside the
 * response in the worker (the engine's evaluation holds Fractions and Maps, which do not cross
 * postMessage).
 */
export interface CalcView {
  /** Spec limits in the result's unit, for the band picture. */
  readonly band: { min?: number; max?: number; preferredMin?: number; preferredMax?: number; reject?: number } | null;
  /** Where the verdict changes for this interval, in the result's unit. */
  readonly limits: { acceptMin?: number; acceptMax?: number; rejectBelow?: number; rejectAbove?: number } | null;
  readonly rule: DecisionRule | null;
  readonly ruleText: string | null;
  readonly rejectSide: 'upper' | 'lower' | null;
  /** Decimal places the value is shown at (GUM 7.2.6). */
  readonly valueDecimals: number;
  /** The interval is not symmetric about the value beyond the numerical tolerance. */
  readonly asymmetric: boolean;
  /** The result as one line, as the engine words it. */
  readonly resultText: string;
}

/** A worked-out request: the API's response and the page's extras. */
export interface CalcOutcome {
  readonly response: CalcResponse;
  readonly view: CalcView;
}

/** A problem the engine found with the request, by field path. */
export interface CalcIssue {
  readonly path: (string | number)[];
  readonly message: string;
}

/** Page → worker. */
export interface CalcWorkerRequest {
  readonly id: number;
  readonly input: unknown;
  readonly options?: { trials?: number; forceMonteCarlo?: boolean };
}

/** Worker → page. */
export type CalcWorkerReply =
  | { readonly id: number; readonly ok: true; readonly outcome: CalcOutcome }
  | { readonly id: number; readonly ok: false; readonly issues: CalcIssue[] }
  | { readonly id: number; readonly ok: false; readonly failure: string };
