/**
 * The trade's usual measurement functions, as templates a builder picks instead of typing a
 * formula. Each names its readings (slots) and constants, and its formula uses their keys, so
 * it goes through `compileFormula` like any formula a builder writes.
 *
 * Where each comes from: the volumes are geometry (a cylinder is π/4·d²·h), the clearances are
 * differences of two sizes by definition, and the rest are single readings. How to take a
 * reading is sometimes only shop habit; such hints say "common practice (no published source)".
 */
import type { FormulaInput } from './formula';
import { quantityDimensions, type AnyUnit, type QuantityKind } from './quantities';

/** How we know the formula is right. */
export type TemplateBasis = 'geometry' | 'direct reading';

/** Marks a hint that passes on shop habit rather than a published procedure. */
export const COMMON_PRACTICE = 'common practice (no published source)';

/** A reading the builder takes for a template. */
export interface TemplateSlot {
  /** Reading key, used in the formula. */
  readonly key: string;
  readonly label: string;
  readonly quantity: QuantityKind;
  /** What to measure, in plain words. */
  readonly hint: string;
  /** The unit the trade usually records it in, when there is one regardless of system (cc). */
  readonly unit?: AnyUnit;
}

/** A named constant of a template: a fixed value (180°), or one the builder sets (a target). */
export interface TemplateConstant {
  readonly key: string;
  readonly label: string;
  readonly quantity: QuantityKind;
  readonly hint: string;
  /** A decimal string in `unit`; absent when the builder supplies it. */
  readonly fixed?: { readonly value: string; readonly unit: AnyUnit };
}

/** One measurement function a builder can pick. */
export interface FormulaTemplate {
  readonly id: string;
  readonly name: string;
  /** What is computed and why, in a sentence or two. */
  readonly explanation: string;
  readonly slots: readonly TemplateSlot[];
  readonly constants: readonly TemplateConstant[];
  /** Formula text over the slot and constant keys (see `formula.ts` for the syntax). */
  readonly formula: string;
  readonly result: QuantityKind;
  readonly basis: TemplateBasis;
}

const bore: TemplateSlot = {
  key: 'bore',
  label: 'Bore',
  quantity: 'length',
  hint: 'Cylinder bore diameter.',
};

const stroke: TemplateSlot = {
  key: 'stroke',
  label: 'Stroke',
  quantity: 'length',
  hint: 'Piston travel from bottom to top dead centre: twice the crank throw.',
};

/** Every template, in the order a picker shows them. */
export const formulaTemplates: readonly FormulaTemplate[] = [
  {
    id: 'swept-volume',
    name: 'Swept volume',
    explanation:
      'The volume one piston sweeps from bottom to top dead centre: a cylinder of the bore ' +
      'diameter and the stroke length, π/4 × bore² × stroke.',
    slots: [bore, stroke],
    constants: [],
    formula: 'pi/4 * bore^2 * stroke',
    result: 'volume',
    basis: 'geometry',
  },
  {
    id: 'compression-ratio',
    name: 'Static compression ratio',
    explanation:
      'Volume above the piston at bottom dead centre over the volume at top dead centre. At top ' +
      'dead centre that is the chamber, the gasket, the gap between piston and deck, and the dish; ' +
      'at bottom dead centre the swept volume (π/4 × bore² × stroke) is added.',
    slots: [
      bore,
      stroke,
      { key: 'chamber', label: 'Chamber volume', quantity: 'volume', unit: 'cc', hint: 'Combustion chamber in the head, cc’d.' },
      {
        key: 'gasket-bore',
        label: 'Gasket bore',
        quantity: 'length',
        hint: 'Diameter of the head gasket’s fire ring opening.',
      },
      {
        key: 'gasket-thickness',
        label: 'Gasket thickness',
        quantity: 'length',
        hint: 'Compressed thickness of the head gasket, as its maker states it.',
      },
      {
        key: 'deck-height',
        label: 'Deck height',
        quantity: 'length',
        hint: 'How far the piston crown is below the deck at top dead centre; negative when it stands above.',
      },
      {
        key: 'dish',
        label: 'Dish volume',
        quantity: 'volume',
        unit: 'cc',
        hint: 'Volume of the piston’s dish and valve reliefs below the crown, cc’d; negative for a dome.',
      },
    ],
    constants: [],
    formula:
      '(pi/4*bore^2*stroke + chamber + pi/4*gasket-bore^2*gasket-thickness + pi/4*bore^2*deck-height + dish)' +
      ' / (chamber + pi/4*gasket-bore^2*gasket-thickness + pi/4*bore^2*deck-height + dish)',
    result: 'ratio',
    basis: 'geometry',
  },
  {
    id: 'deck-height-reading',
    name: 'Deck height from a depth reading',
    explanation:
      'How far the piston crown is below the deck at top dead centre, read directly with a depth ' +
      'gauge or an indicator zeroed on the deck.',
    slots: [
      {
        key: 'piston-depth',
        label: 'Piston depth',
        quantity: 'length',
        hint: `Read at both ends of the crown along the pin axis to cancel rock — ${COMMON_PRACTICE}.`,
      },
    ],
    constants: [],
    formula: 'piston-depth',
    result: 'length',
    basis: 'direct reading',
  },
  {
    id: 'deck-height-stack',
    name: 'Deck height from the stack-up',
    explanation:
      'The block’s height from crank centreline to deck, less what stands under the piston crown at ' +
      'top dead centre: crank throw, rod length and the piston’s pin height. Positive means the ' +
      'crown is below the deck.',
    slots: [
      { key: 'block-height', label: 'Block deck height', quantity: 'length', hint: 'Main bore centreline to the deck face.' },
      { key: 'crank-throw', label: 'Crank throw', quantity: 'length', hint: 'Main journal centre to rod journal centre: half the stroke.' },
      { key: 'rod-length', label: 'Rod length', quantity: 'length', hint: 'Big end centre to small end centre.' },
      { key: 'pin-height', label: 'Pin height', quantity: 'length', hint: 'Piston pin centre to the crown (compression height).' },
    ],
    constants: [],
    formula: 'block-height - (crank-throw + rod-length + pin-height)',
    result: 'length',
    basis: 'geometry',
  },
  {
    id: 'piston-to-bore',
    name: 'Piston-to-bore clearance',
    explanation: 'Bore diameter less piston diameter: the diametral clearance the piston runs in.',
    slots: [
      bore,
      {
        key: 'piston',
        label: 'Piston diameter',
        quantity: 'length',
        hint: 'Across the skirt at the gauge point the piston maker gives, square to the pin.',
      },
    ],
    constants: [],
    formula: 'bore - piston',
    result: 'length',
    basis: 'geometry',
  },
  {
    id: 'ring-end-gap',
    name: 'Ring end gap',
    explanation: 'The gap between the ring’s ends with the ring square in its bore, read with feeler blades.',
    slots: [
      {
        key: 'ring-gap',
        label: 'End gap',
        quantity: 'length',
        hint: `Push the ring down with an upside-down piston so it sits square — ${COMMON_PRACTICE}.`,
      },
    ],
    constants: [],
    formula: 'ring-gap',
    result: 'length',
    basis: 'direct reading',
  },
  {
    id: 'radial-clearance',
    name: 'Radial clearance from diametral',
    explanation:
      'Half the diametral clearance (bore less journal): the gap on one side with the journal ' +
      'centred, which is how some specs state bearing clearance.',
    slots: [
      {
        key: 'diametral',
        label: 'Diametral clearance',
        quantity: 'length',
        hint: 'Bearing bore less journal diameter.',
      },
    ],
    constants: [],
    formula: 'diametral / 2',
    result: 'length',
    basis: 'geometry',
  },
  {
    id: 'stock-to-remove',
    name: 'Stock to remove',
    explanation:
      'How much must come off to reach a target size: the measured size less the target. Negative ' +
      'means the part is already under the target.',
    slots: [{ key: 'measured', label: 'Measured size', quantity: 'length', hint: 'The size as it is now.' }],
    constants: [{ key: 'target', label: 'Target size', quantity: 'length', hint: 'The size to machine to.' }],
    formula: 'measured - target',
    result: 'length',
    basis: 'geometry',
  },
  {
    id: 'crank-end-float',
    name: 'Crank end float',
    explanation: 'How far the crank moves fore and aft against its thrust bearing, read with a dial indicator.',
    slots: [
      {
        key: 'end-float',
        label: 'End float',
        quantity: 'length',
        hint: `Pry the crank fully one way, zero the indicator on its nose or flange, pry it fully the other way — ${COMMON_PRACTICE}.`,
      },
    ],
    constants: [],
    formula: 'end-float',
    result: 'length',
    basis: 'direct reading',
  },
  {
    id: 'valve-lash',
    name: 'Valve lash',
    explanation: 'The clearance in the valve train with the lifter on the cam’s base circle, read with feeler blades.',
    slots: [
      {
        key: 'lash',
        label: 'Lash',
        quantity: 'length',
        hint: 'Between rocker and valve tip (or as the engine maker says), hot or cold as the spec says.',
      },
    ],
    constants: [],
    formula: 'lash',
    result: 'length',
    basis: 'direct reading',
  },
  {
    id: 'intake-centreline',
    name: 'Intake centreline',
    explanation:
      'Where the intake lobe peaks, in crank degrees after top dead centre: the valve is open for ' +
      'opening + 180° + closing, and the peak is half of that after the opening point.',
    slots: [
      {
        key: 'opening',
        label: 'Intake opens',
        quantity: 'angle',
        unit: 'deg',
        hint: 'Crank degrees before top dead centre, at the checking lift on the cam card.',
      },
      {
        key: 'closing',
        label: 'Intake closes',
        quantity: 'angle',
        unit: 'deg',
        hint: 'Crank degrees after bottom dead centre, at the same checking lift.',
      },
    ],
    constants: [
      {
        key: 'half-turn',
        label: 'Top to bottom dead centre',
        quantity: 'angle',
        hint: 'Half a crank turn.',
        fixed: { value: '180', unit: 'deg' },
      },
    ],
    formula: '(opening + closing + half-turn) / 2 - opening',
    result: 'angle',
    basis: 'geometry',
  },
];

/** The template with this id, or undefined. */
export function formulaTemplate(id: string): FormulaTemplate | undefined {
  return formulaTemplates.find((t) => t.id === id);
}

/** A template's slots then constants as `compileFormula` inputs, with their dimensions. */
export function templateInputs(template: FormulaTemplate): FormulaInput[] {
  return [...template.slots, ...template.constants].map(({ key, quantity }) => ({
    name: key,
    dimension: quantityDimensions[quantity],
  }));
}
