import type { Sequelize } from 'sequelize';
import { initUserModel } from '../features/users/user.model';

/** Initialises every feature's models and their associations on one Sequelize instance. */
export function initModels(sequelize: Sequelize) {
  initUserModel(sequelize);
}
