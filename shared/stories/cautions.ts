/**
 * Cautions a story can carry (`:::caution machining` … `:::` in its body), and the standing note
 * every story shows. Short and sober: what can hurt you, and the usual protection against it.
 */

/** The kinds of caution a builder can put in a story. */
export const cautionKinds = ['machining', 'solvents', 'running-engine', 'lifting', 'pressure', 'electrical', 'hot-parts', 'fasteners'] as const;

/** A kind of caution. */
export type CautionKind = (typeof cautionKinds)[number];

/** Type guard for a caution kind. */
export function isCautionKind(value: unknown): value is CautionKind {
  return typeof value === 'string' && (cautionKinds as readonly string[]).includes(value);
}

/** Title and text shown at the head of each kind of caution. */
export const cautionTexts: Readonly<Record<CautionKind, { title: string; text: string }>> = {
  machining: {
    title: 'Machining',
    text: 'Wear eye protection, keep guards in place, and keep hands, sleeves and hair clear of moving spindles and cutters. Clamp the work; stop the machine before measuring or clearing swarf.',
  },
  solvents: {
    title: 'Solvents and cleaners',
    text: 'Work with good ventilation and no flames, sparks or heaters nearby. Wear gloves and eye protection, keep containers closed, and follow the maker’s safety data sheet.',
  },
  'running-engine': {
    title: 'Running an engine',
    text: 'Exhaust gas can kill: run engines outdoors or with the exhaust piped out. Keep clear of fans, belts and moving parts, secure the engine and the vehicle or boat, and have an extinguisher to hand.',
  },
  lifting: {
    title: 'Lifting',
    text: 'Use lifting gear rated for the load, check it before use, and never work under a load held only by a hoist or jack: support it on stands or blocks.',
  },
  pressure: {
    title: 'Pressure',
    text: 'Release pressure before opening any system, and test with the fluid and pressure the manual gives. Fuel injectors and hydraulic lines can inject fluid through skin: keep hands clear of leaks.',
  },
  electrical: {
    title: 'Electrical',
    text: 'Disconnect the battery or supply before working on wiring. Batteries can give off explosive gas and large currents: no sparks near them, and no metal across the terminals.',
  },
  'hot-parts': {
    title: 'Hot parts',
    text: 'Engines, exhausts and heated parts stay hot long after they look cool. Use heat-resistant gloves and tongs, and let parts cool before measuring them (a hot part also measures large).',
  },
  fasteners: {
    title: 'Torquing fasteners',
    text: 'Torque to the manufacturer’s figures, in their sequence and stages, on threads prepared as the manual says (clean, oiled or dry). A wrench out of calibration, a skipped stage or a reused stretch bolt can strip a thread, warp a head or let a joint leak.',
  },
};

/** Shown for a caution block whose kind is not one of `cautionKinds`. */
export const GENERAL_CAUTION: Readonly<{ title: string; text: string }> = {
  title: 'Caution',
  text: 'This step can hurt people or damage parts. Follow the manufacturer’s manual and qualified practice.',
};

/** The note every story carries. */
export const STANDING_NOTE =
  'The figures and procedures in this story are the builder’s own, from their instruments and their judgement. Follow the manufacturer’s manual, local rules and qualified practice for your own work.';
