/**
 * Where the second witness of a reading stands (the rule: `shared/review/heard.ts`): the figure
 * said near its moment agrees with the one logged, disagrees, nothing was said, or the clip has
 * not been listened to. Apart from the rule so schemas can name the states without loading it.
 */
export const heardStates = ['agrees', 'disagrees', 'nothing-heard', 'not-listened'] as const;
/** Where the witness stands for one reading. */
export type HeardState = (typeof heardStates)[number];
