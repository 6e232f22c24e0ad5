import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { demoBuildsFileSchema, demoPeopleFileSchema, type DemoBuild, type DemoPerson } from '@shared/content/people.schema';

/** The project's content/ folder (the invented demo scenario). */
export const contentDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../content');

/** The invented demo people, validated. */
export function loadDemoPeople(dir = contentDir): DemoPerson[] {
  const raw = JSON.parse(fs.readFileSync(path.join(dir, 'people.json'), 'utf8'));
  return demoPeopleFileSchema.parse(raw).people;
}

/** The invented demo builds, validated. */
export function loadDemoBuilds(dir = contentDir): DemoBuild[] {
  const raw = JSON.parse(fs.readFileSync(path.join(dir, 'builds.json'), 'utf8'));
  return demoBuildsFileSchema.parse(raw).builds;
}
