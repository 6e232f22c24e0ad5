import type { Sequelize } from 'sequelize';
import { Build, Part, initBuildModels } from '../features/builds/build.model';
import { Clip, Moment, initClipModels } from '../features/clips/clip.model';
import { User, initUserModel } from '../features/users/user.model';

/** Initialises every feature's models and their associations on one Sequelize instance. */
export function initModels(sequelize: Sequelize) {
  initUserModel(sequelize);
  initBuildModels(sequelize);
  initClipModels(sequelize);

  Build.belongsTo(User, { as: 'owner', foreignKey: 'ownerId' });
  Build.hasMany(Part, { as: 'parts', foreignKey: 'buildId' });
  Part.belongsTo(Build, { foreignKey: 'buildId' });
  Build.hasMany(Clip, { as: 'clips', foreignKey: 'buildId' });
  Clip.belongsTo(Build, { as: 'build', foreignKey: 'buildId' });
  Clip.hasMany(Moment, { as: 'moments', foreignKey: 'clipId' });
  Moment.belongsTo(Clip, { foreignKey: 'clipId' });
  Moment.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });
}
