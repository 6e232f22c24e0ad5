/**
 * A result's figures in its own unit, whatever it measures. Free of zod, so a reader's first
 * page can use it.
 */
import type { ClearanceResult } from './clearance.schema';

/** A result's figures in its own unit, from the fields it carries (older length results have µm only). */
export function resultFigures(result: Pick<ClearanceResult, 'quantity' | 'unit' | 'valueUm' | 'standardUncertaintyUm' | 'expandedUncertaintyUm' | 'intervalUm' | 'value' | 'standardUncertainty' | 'expandedUncertainty' | 'interval'>): {
  quantity: ClearanceResult['quantity'];
  value: number;
  standardUncertainty: number;
  expandedUncertainty: number;
  interval: [number, number];
} {
  if (result.value !== undefined && result.standardUncertainty !== undefined && result.expandedUncertainty !== undefined) {
    const interval: [number, number] = result.interval ?? [result.value - result.expandedUncertainty, result.value + result.expandedUncertainty];
    return { quantity: result.quantity ?? 'length', value: result.value, standardUncertainty: result.standardUncertainty, expandedUncertainty: result.expandedUncertainty, interval };
  }
  // An older length result: its µm figures in its unit.
  const umPer = UM_PER_LENGTH_UNIT[result.unit] ?? 1;
  const value = (result.valueUm ?? 0) / umPer;
  const expanded = (result.expandedUncertaintyUm ?? 0) / umPer;
  const interval: [number, number] = result.intervalUm ? [result.intervalUm[0] / umPer, result.intervalUm[1] / umPer] : [value - expanded, value + expanded];
  return { quantity: result.quantity ?? 'length', value, standardUncertainty: (result.standardUncertaintyUm ?? 0) / umPer, expandedUncertainty: expanded, interval };
}

/** Micrometres in one of each length unit (NIST SP 811 B.8: 1 in = 25.4 mm exactly). */
const UM_PER_LENGTH_UNIT: Readonly<Record<string, number>> = { in: 25_400, thou: 25.4, tenth: 2.54, mm: 1000, um: 1 };
