import fs from 'node:fs';
import path from 'node:path';
import type { Transaction } from 'sequelize';
import { demoInstrumentsFileSchema, type DemoInstrument } from '@shared/instruments/demo-instruments.schema';
import { figureTextIn } from '@shared/measure/quantity-text';
import { demoSpecsFileSchema, type DemoSpec } from '@shared/specs/demo-specs.schema';
import { Instrument } from '../features/instruments/instrument.model';
import { Spec, SpecVersion } from '../features/specs/spec.model';
import { specVersionColumns } from '../features/specs/specs.service';
import { User } from '../features/users/user.model';
import { contentDir } from './demo-content';

/** What a library seed run made and what it found already there. */
export interface LibrarySeedReport {
  created: string[];
  kept: string[];
}

/** The invented demo instruments (content/instruments.json), validated. */
export function loadDemoInstruments(dir = contentDir): DemoInstrument[] {
  const raw = JSON.parse(fs.readFileSync(path.join(dir, 'instruments.json'), 'utf8'));
  return demoInstrumentsFileSchema.parse(raw).instruments;
}

/** The invented starter specs (content/specs.json), validated. */
export function loadDemoSpecs(dir = contentDir): DemoSpec[] {
  const raw = JSON.parse(fs.readFileSync(path.join(dir, 'specs.json'), 'utf8'));
  return demoSpecsFileSchema.parse(raw).specs;
}

async function ownerOf(login: string, file: string, transaction: Transaction): Promise<User> {
  const owner = await User.findOne({ where: { login }, transaction });
  if (!owner) throw new Error(`content/${file} names an owner who is not in people.json: ${login}`);
  return owner;
}

/** Decimal text in `unit` as the API stores it; the content file is checked, so a failure is a bug in it. */
function stored(text: string, unit: Instrument['unit'], what: string): string {
  const parsed = figureTextIn(text, unit);
  if (!parsed.ok) throw new Error(`content/instruments.json: ${what}: ${parsed.message}`);
  return parsed.text;
}

/**
 * Seeds the demo instruments and starter specs (run after the people). Idempotent: a row is
 * matched by owner and name, and one that exists is left exactly as it is (a builder's edits and
 * later versions stay); only missing rows are made.
 */
export async function seedLibrary(transaction: Transaction): Promise<LibrarySeedReport> {
  const report: LibrarySeedReport = { created: [], kept: [] };
  for (const { owner: login, instrument: i } of loadDemoInstruments()) {
    const owner = await ownerOf(login, 'instruments.json', transaction);
    const [, created] = await Instrument.findOrCreate({
      where: { ownerId: owner.id, name: i.name },
      defaults: {
        ownerId: owner.id,
        name: i.name,
        kind: i.kind,
        serial: i.serial,
        unit: i.unit,
        resolution: stored(i.resolution, i.unit, `${i.name} resolution`),
        statedUncertainty: i.statedUncertainty === null ? null : stored(i.statedUncertainty, i.unit, `${i.name} statedUncertainty`),
        calibrationUncertainty: i.calibrationUncertainty === null ? null : stored(i.calibrationUncertainty, i.unit, `${i.name} calibrationUncertainty`),
        calibrationCoverageFactor: i.calibrationCoverageFactor,
        maxPermissibleError: i.maxPermissibleError === null ? null : stored(i.maxPermissibleError, i.unit, `${i.name} maxPermissibleError`),
        settingStandardUncertainty: i.settingStandardUncertainty === null ? null : stored(i.settingStandardUncertainty, i.unit, `${i.name} settingStandardUncertainty`),
        settingStandardCoverageFactor: i.settingStandardCoverageFactor,
        calibrationIntervalDays: i.calibrationIntervalDays,
        lastCalibratedOn: i.lastCalibratedOn,
        calibratedBy: i.calibratedBy,
        note: i.note,
        retired: i.retired,
      },
      transaction,
    });
    (created ? report.created : report.kept).push(`instrument: ${i.name}`);
  }
  for (const { owner: login, spec: s } of loadDemoSpecs()) {
    const owner = await ownerOf(login, 'specs.json', transaction);
    const existing = await Spec.findOne({ where: { ownerId: owner.id, name: s.name }, transaction });
    if (existing) {
      report.kept.push(`spec: ${s.name}`);
      continue;
    }
    const spec = await Spec.create({ ownerId: owner.id, name: s.name, appliesTo: s.appliesTo, shared: s.shared }, { transaction });
    await SpecVersion.create({ specId: spec.id, version: 1, createdBy: owner.id, ...specVersionColumns(s) }, { transaction });
    report.created.push(`spec: ${s.name}`);
  }
  return report;
}
