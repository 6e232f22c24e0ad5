/**
 * Clearance templates: the usual ways a clearance is made from readings, each saying in plain
 * words what is subtracted from what and why. A template only fills in the terms and their
 * signs; the working is the same signed sum for all of them, and it is always shown.
 */
import type { ClearanceTemplateId } from './clearance.schema';

/** One reading a template asks for, with the sign it enters the sum with. */
export interface ClearanceTemplateSlot {
  label: string;
  sign: 1 | -1;
  hint: string;
}

/** A way of making a clearance from readings. `slots` is empty for 'custom' (any readings, any signs). */
export interface ClearanceTemplate {
  id: ClearanceTemplateId;
  name: string;
  explanation: string;
  slots: ClearanceTemplateSlot[];
  suggestedKey: string;
  suggestedName: string;
}

/** Every template, in the order a picker shows them. */
export const clearanceTemplates: readonly ClearanceTemplate[] = [
  {
    id: 'end-float',
    name: 'End float from a depth and a height',
    explanation:
      'The rotor height is subtracted from the bore depth: bore depth − rotor height. The depth is measured from the body face to the floor of the bore, the height across the rotor; whatever is left over is how far the rotor can move along its axis, which is the end float.',
    slots: [
      { label: 'Bore depth', sign: 1, hint: 'from the body face down to the floor of the bore, e.g. with a depth micrometer' },
      { label: 'Rotor height', sign: -1, hint: 'across the rotor, face to face, e.g. with an outside micrometer' },
    ],
    suggestedKey: 'end-float',
    suggestedName: 'End float',
  },
  {
    id: 'feeler-gap',
    name: 'A gap from a feeler bracket',
    explanation:
      'Nothing is subtracted: the gap is the one bracket reading itself. It is taken as the midpoint between the thickest blade that enters and the thinnest that does not, and its uncertainty comes from the width between those two blades, because the gap could be anywhere between them.',
    slots: [{ label: 'Feeler bracket', sign: 1, hint: 'the thickest blade that enters and the thinnest that does not' }],
    suggestedKey: 'gap',
    suggestedName: 'Gap',
  },
  {
    id: 'bearing-clearance',
    name: 'Bearing clearance from a bore and a journal',
    explanation:
      'The journal diameter is subtracted from the bore diameter: bore − journal. The bore is measured with the shell fitted (and the cap torqued, where the manual says so), the journal across the crank; the difference is the room the oil film has.',
    slots: [
      { label: 'Bore diameter', sign: 1, hint: 'inside the fitted bearing, e.g. with a dial bore gauge or inside micrometer' },
      { label: 'Journal diameter', sign: -1, hint: 'across the journal at the same place, e.g. with an outside micrometer' },
    ],
    suggestedKey: 'bearing-clearance',
    suggestedName: 'Bearing clearance',
  },
  {
    id: 'material-removed',
    name: 'Material removed, before and after',
    explanation:
      'The size after the work is subtracted from the size before it: before − after. Measured the same way at the same place both times, the difference is how much the facing, lapping or grinding took off.',
    slots: [
      { label: 'Before', sign: 1, hint: 'the size before the work' },
      { label: 'After', sign: -1, hint: 'the same size, measured the same way, after the work' },
    ],
    suggestedKey: 'material-removed',
    suggestedName: 'Material removed',
  },
  {
    id: 'custom',
    name: 'Custom',
    explanation:
      'Pick the readings and give each a sign: + adds it, − subtracts it. The clearance is the signed sum, written out term by term in the working so anyone can follow it.',
    slots: [],
    suggestedKey: 'clearance',
    suggestedName: 'Clearance',
  },
];

/** The template with this id. */
export function clearanceTemplate(id: ClearanceTemplateId): ClearanceTemplate {
  return clearanceTemplates.find((t) => t.id === id)!;
}
