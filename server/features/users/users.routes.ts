import { Router } from 'express';
import {
  changeRoleBodySchema,
  listUsersQuerySchema,
  userIdParamsSchema,
  type ChangeRoleBody,
  type ListUsersQuery,
} from '@shared/users/user.schema';
import { access } from '../../http/authorize';
import { validQuery, validate } from '../../http/validate';
import { changeRole, listUsers } from './users.service';

/** Admin routes over accounts, mounted at /api/admin/users. */
export const adminUsersRouter = Router();

adminUsersRouter.get('/', access.role('admin'), validate({ query: listUsersQuerySchema }), async (_req, res) => {
  res.json(await listUsers(validQuery<ListUsersQuery>(res)));
});

adminUsersRouter.patch(
  '/:id',
  access.role('admin'),
  validate({ params: userIdParamsSchema, body: changeRoleBodySchema }),
  async (req, res) => {
    const { role } = req.body as ChangeRoleBody;
    const user = await changeRole(Number(req.params.id), role);
    req.log.info({ userId: user.id, role, by: req.user!.id }, 'role changed');
    res.json({ user: user.toDto() });
  },
);
