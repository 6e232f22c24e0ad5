import { z } from 'zod';
import { dbIdText, dbNonNegativeIntegerText } from '../http/db-values.schema';
import { temperatureScales, unitSystemsForDefaults } from '../measure/quantities';

/** Every role a Benchproof account can hold, lowest privilege first. New accounts are followers. */
export const roles = ['follower', 'builder', 'moderator', 'admin'] as const;

/** Schema of a role name. */
export const roleSchema = z.enum(roles);

/** A role name. */
export type Role = z.infer<typeof roleSchema>;

/** Schema of a default unit system: new figures start in inches and thou, or millimetres and micrometres. */
export const defaultUnitSystemSchema = z.enum(unitSystemsForDefaults, { error: 'unitSystem must be "imperial", "metric" or null' });

/** Schema of a default temperature scale. */
export const temperatureScaleSchema = z.enum(temperatureScales, { error: 'temperatureScale must be "degC", "degF" or null' });

/** A user as the API shows it to the user themselves and to admins. */
export const userSchema = z.object({
  id: z.number().int().positive(),
  login: z.string(),
  displayName: z.string(),
  email: z.string().nullable(),
  avatarUrl: z.string().nullable(),
  shop: z.string().nullable(),
  role: roleSchema,
  /** Default unit system for new figures; null = not chosen (the product's own default applies). */
  unitSystem: defaultUnitSystemSchema.nullable(),
  /** Default temperature scale; null = the unit system's (°F imperial, °C metric). */
  temperatureScale: temperatureScaleSchema.nullable(),
  createdAt: z.string(),
});

/** A user as the API shows it. */
export type User = z.infer<typeof userSchema>;

/** Response of `GET /api/me`. */
export const meResponseSchema = z.object({ user: userSchema });
export type MeResponse = z.infer<typeof meResponseSchema>;

/** Body of `PATCH /api/admin/users/:id`. */
export const changeRoleBodySchema = z.object({ role: roleSchema }).strict();
export type ChangeRoleBody = z.infer<typeof changeRoleBodySchema>;

/** Response of `PATCH /api/admin/users/:id`. */
export const changeRoleResponseSchema = z.object({ user: userSchema });
export type ChangeRoleResponse = z.infer<typeof changeRoleResponseSchema>;

/** Path parameters naming one user. */
export const userIdParamsSchema = z.object({ id: dbIdText });

/** Query of `GET /api/admin/users`: keyset pagination by id, optional role filter. */
export const listUsersQuerySchema = z.object({
  after: dbNonNegativeIntegerText.optional(),
  limit: z.coerce.number().int().min(1).max(100).default(50),
  role: roleSchema.optional(),
});
export type ListUsersQuery = z.infer<typeof listUsersQuerySchema>;

/** Response of `GET /api/admin/users`. `nextAfter` is null on the last page. */
export const listUsersResponseSchema = z.object({
  items: z.array(userSchema),
  nextAfter: z.number().int().nullable(),
});
export type ListUsersResponse = z.infer<typeof listUsersResponseSchema>;
