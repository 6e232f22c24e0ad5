import Papa from 'papaparse';
import { fractionToFixed } from '@shared/measure/exact';
import { decimalsForStep } from '@shared/measure/format-quantity';
import { evaluateReading } from '@shared/measure/readings';
import { readingCsvColumns, type Reading as ReadingDto } from '@shared/readings/reading.schema';

/**
 * A cell a spreadsheet would run as a formula: starting with = + - @, a tab or a carriage
 * return (OWASP, "CSV Injection"). Plain numbers such as -0.0001 are left alone, so figures
 * stay figures; anything else that starts so is prefixed with a single quote.
 */
export const formulaLike = /^(?![+-]?(?:\d+(?:\.\d*)?|\.\d+)$)[=+\-@\t\r]/;

/** Separator of the values of a repeated reading inside their one cell. */
export const VALUES_SEPARATOR = ' ';

/** The estimate as plain decimal text in the reading's unit, at its display step. */
function estimateText(r: ReadingDto): string {
  const evaluated = evaluateReading(r.key, r.engine);
  return fractionToFixed(evaluated.estimate, decimalsForStep(evaluated.displayStep), { minus: '-' });
}

/** One row per reading, columns in `readingCsvColumns` order; figures exactly as stored. */
export function readingsCsv(readings: readonly ReadingDto[]): string {
  const rows = readings.map((r): Record<(typeof readingCsvColumns)[number], string> => ({
    key: r.key,
    name: r.name,
    kind: r.kind,
    unit: r.unit,
    value: r.value ?? '',
    passes: r.passes ?? '',
    stops: r.stops ?? '',
    values: r.values ? r.values.join(VALUES_SEPARATOR) : '',
    estimate: estimateText(r),
    standard_uncertainty_um: r.result.standardUncertaintyUm === null ? '' : String(Number(r.result.standardUncertaintyUm.toPrecision(6))),
    standard_uncertainty: r.result.standardUncertainty === undefined ? '' : String(Number(r.result.standardUncertainty.toPrecision(6))),
    instrument: r.instrumentName,
    part: r.partName ?? '',
    clip: r.clipTitle,
    at_s: (r.atMs / 1000).toFixed(3),
    taken_on: r.takenOn,
    temperature_c: r.temperatureC === null ? '' : String(r.temperatureC),
    material: r.material ?? '',
    review_state: r.reviewState,
    warnings: r.warnings.map((w) => w.code).join(' '),
    note: r.note,
    logged_by: r.createdByName,
  }));
  return Papa.unparse({ fields: [...readingCsvColumns], data: rows.map((row) => readingCsvColumns.map((c) => row[c])) }, { escapeFormulae: formulaLike, newline: '\r\n' }) + '\r\n';
}
