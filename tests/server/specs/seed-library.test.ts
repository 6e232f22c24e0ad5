import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { calibrationStateOn, instrumentListResponseSchema, instrumentResponseSchema } from '@shared/instruments/instrument.schema';
import { specListResponseSchema, specResponseSchema } from '@shared/specs/spec-library.schema';
import { Instrument } from '../../../server/features/instruments/instrument.model';
import { Spec, SpecVersion } from '../../../server/features/specs/spec.model';
import { seedDemo } from '../../../server/db/seed';
import { loadDemoInstruments, loadDemoSpecs, seedLibrary } from '../../../server/db/seed-library';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

const labels = () => [...loadDemoInstruments().map((i) => `instrument: ${i.instrument.name}`), ...loadDemoSpecs().map((s) => `spec: ${s.spec.name}`)];

describe('the demo library content', () => {
  it('is invented and says so; specs cite a source, all but one a (made-up) manual, one a rule of thumb', () => {
    const specs = loadDemoSpecs();
    expect(specs.length).toBeGreaterThanOrEqual(10);
    for (const { spec } of specs) {
      expect(spec.shared).toBe(true);
      if (spec.source.kind === 'manual') expect(spec.source.text).toMatch(/invented for the Benchproof demo.*check your manufacturer/);
    }
    const practice = specs.filter((s) => s.spec.source.kind === 'common-practice');
    expect(practice).toHaveLength(1);
    expect(practice[0]!.spec.source.text).toContain('Common practice (no published source)');
  });

  it('gives Ines one instrument past its calibration date on 2026-12-02, the demo’s day, and Tomasz metric ones', () => {
    const instruments = loadDemoInstruments();
    const overdue = instruments.filter((i) => calibrationStateOn(i.instrument, '2026-12-02') === 'overdue');
    expect(overdue.map((i) => [i.owner, i.instrument.serial])).toEqual([['demo-builder', 'MV-BG-04']]);
    expect(instruments.filter((i) => i.owner === 'demo-builder-2').every((i) => i.instrument.unit === 'mm')).toBe(true);
  });
});

describe('seeding the library', () => {
  it('the seed made every demo instrument and spec once, each spec at version 1', async () => {
    for (const { owner, instrument } of loadDemoInstruments()) {
      const rows = await Instrument.findAll({ where: { name: instrument.name }, include: [{ association: 'owner', where: { login: owner } }] });
      expect(rows, instrument.name).toHaveLength(1);
      expect(rows[0]!.resolution).toBe(instrument.resolution);
    }
    for (const { owner, spec } of loadDemoSpecs()) {
      const rows = await Spec.findAll({ where: { name: spec.name }, include: [{ association: 'owner', where: { login: owner } }] });
      expect(rows, spec.name).toHaveLength(1);
      const versions = await SpecVersion.findAll({ where: { specId: rows[0]!.id } });
      expect(versions.map((v) => v.version)).toEqual([1]);
    }
  });

  it('run again it makes nothing and keeps everything, and a builder’s edits and later versions stay', async () => {
    const ines = await signIn(t, 'demo-builder');
    const token = await csrfToken(ines);
    const list = instrumentListResponseSchema.parse((await ines.get('/api/instruments?limit=200').expect(200)).body);
    const micrometer = list.items.find((i) => i.serial === 'MV-DM-02')!;
    const edited = await ines.patch(`/api/instruments/${micrometer.id}`).set('x-csrf-token', token).send({ note: 'Edited by the builder', lockVersion: micrometer.lockVersion }).expect(200);
    const found = specListResponseSchema.parse((await ines.get(`/api/specs?mine=1&q=${encodeURIComponent('crank end float')}`).expect(200)).body);
    const crank = found.items.find((s) => s.name === 'Vellum 1100 crank end float')!;
    await ines
      .post(`/api/specs/${crank.id}/versions`)
      .set('x-csrf-token', token)
      .send({ unit: 'in', min: '0.0025', max: '0.0060', source: { kind: 'manual', text: 'Vellum 1100 workshop manual (invented for the Benchproof demo), amendment 2' } })
      .expect(201);

    const counts = async () => [await Instrument.count(), await Spec.count(), await SpecVersion.count()];
    const before = await counts();
    const again = await t.sequelize.transaction((transaction) => seedLibrary(transaction));
    expect(again.created).toEqual([]);
    expect(again.kept.sort()).toEqual(labels().sort());
    // The whole demo seed too: people and builds are reported as before, the library beside them.
    const whole = await seedDemo(t.sequelize);
    expect(whole.created).toEqual([]);
    expect(whole.library?.created).toEqual([]);
    expect(await counts()).toEqual(before);

    const stillEdited = instrumentResponseSchema.parse((await ines.get(`/api/instruments/${micrometer.id}`).expect(200)).body).instrument;
    expect(stillEdited).toMatchObject({ note: 'Edited by the builder', lockVersion: edited.body.instrument.lockVersion });
    const stillVersioned = specResponseSchema.parse((await ines.get(`/api/specs/${crank.id}`).expect(200)).body).spec;
    expect(stillVersioned.versions?.map((v) => v.version)).toEqual([2, 1]);

    await ines.patch(`/api/instruments/${micrometer.id}`).set('x-csrf-token', token).send({ note: micrometer.note, lockVersion: stillEdited.lockVersion }).expect(200);
  });
});
