import type { Sequelize } from 'sequelize';
import { AuditEntry, initAuditModel } from '../features/audit/audit.model';
import { Follow, initFollowModel } from '../features/follows/follow.model';
import { CheckAnswer, EvidenceCheck, ReviewClaim, StoryPublication, initReviewModels } from '../features/review/review.model';
import { Build, Part, initBuildModels } from '../features/builds/build.model';
import { Clearance, ClearanceTerm, initClearanceModels } from '../features/clearances/clearance.model';
import { Clip, Moment, initClipModels } from '../features/clips/clip.model';
import { Instrument, ZeroCheck, initInstrumentModels } from '../features/instruments/instrument.model';
import { Reading, ReadingRevision, initReadingModels } from '../features/readings/reading.model';
import { Spec, SpecVersion, initSpecModels } from '../features/specs/spec.model';
import { Story, StoryImage, StoryRevision, initStoryModels } from '../features/stories/story.model';
import { User, initUserModel } from '../features/users/user.model';
import { Question, initQuestionModel } from '../features/questions/question.model';
import { initReaderPreferencesModel } from '../features/public/reader-preferences.model';
import { initSpeechModels } from '../features/speech/speech.model';

/** Initialises every feature's models and their associations on one Sequelize instance. */
export function initModels(sequelize: Sequelize) {
  initUserModel(sequelize);
  initBuildModels(sequelize);
  initClipModels(sequelize);
  initInstrumentModels(sequelize);
  initSpecModels(sequelize);
  initReadingModels(sequelize);
  initClearanceModels(sequelize);
  initStoryModels(sequelize);
  initReviewModels(sequelize);
  initAuditModel(sequelize);
  initFollowModel(sequelize);
  initQuestionModel(sequelize);
  initReaderPreferencesModel(sequelize);
  initSpeechModels(sequelize);

  Build.belongsTo(User, { as: 'owner', foreignKey: 'ownerId' });
  Build.hasMany(Part, { as: 'parts', foreignKey: 'buildId' });
  Part.belongsTo(Build, { foreignKey: 'buildId' });
  Build.hasMany(Clip, { as: 'clips', foreignKey: 'buildId' });
  Clip.belongsTo(Build, { as: 'build', foreignKey: 'buildId' });
  Clip.hasMany(Moment, { as: 'moments', foreignKey: 'clipId' });
  Moment.belongsTo(Clip, { as: 'clip', foreignKey: 'clipId' });
  Moment.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });

  Instrument.belongsTo(User, { as: 'owner', foreignKey: 'ownerId' });
  Instrument.hasMany(ZeroCheck, { as: 'zeroChecks', foreignKey: 'instrumentId' });
  ZeroCheck.belongsTo(Instrument, { as: 'instrument', foreignKey: 'instrumentId' });
  ZeroCheck.belongsTo(Moment, { as: 'moment', foreignKey: 'momentId' });
  ZeroCheck.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });

  Spec.belongsTo(User, { as: 'owner', foreignKey: 'ownerId' });
  Spec.hasMany(SpecVersion, { as: 'versions', foreignKey: 'specId' });
  SpecVersion.belongsTo(Spec, { as: 'spec', foreignKey: 'specId' });
  SpecVersion.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });

  Reading.belongsTo(Build, { as: 'build', foreignKey: 'buildId' });
  Reading.belongsTo(Moment, { as: 'moment', foreignKey: 'momentId' });
  Reading.belongsTo(Instrument, { as: 'instrument', foreignKey: 'instrumentId' });
  Reading.belongsTo(Part, { as: 'part', foreignKey: 'partId' });
  Reading.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });
  Reading.belongsTo(User, { as: 'editor', foreignKey: 'updatedBy' });
  Reading.hasMany(ReadingRevision, { as: 'revisions', foreignKey: 'readingId' });
  ReadingRevision.belongsTo(Reading, { foreignKey: 'readingId' });
  ReadingRevision.belongsTo(User, { as: 'changer', foreignKey: 'changedBy' });

  Clearance.belongsTo(Build, { as: 'build', foreignKey: 'buildId' });
  Clearance.belongsTo(SpecVersion, { as: 'specVersion', foreignKey: 'specVersionId' });
  Clearance.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });
  Clearance.hasMany(ClearanceTerm, { as: 'terms', foreignKey: 'clearanceId' });
  ClearanceTerm.belongsTo(Clearance, { foreignKey: 'clearanceId' });
  ClearanceTerm.belongsTo(Reading, { as: 'reading', foreignKey: 'readingId' });

  Story.belongsTo(Build, { as: 'build', foreignKey: 'buildId' });
  Story.belongsTo(Moment, { as: 'coverMoment', foreignKey: 'coverMomentId' });
  Story.belongsTo(User, { as: 'author', foreignKey: 'createdBy' });
  Story.belongsTo(User, { as: 'editor', foreignKey: 'updatedBy' });
  Story.hasMany(StoryRevision, { as: 'revisions', foreignKey: 'storyId' });
  StoryRevision.belongsTo(Story, { foreignKey: 'storyId' });
  StoryRevision.belongsTo(User, { as: 'saver', foreignKey: 'savedBy' });
  Story.hasMany(StoryImage, { as: 'images', foreignKey: 'storyId' });
  StoryImage.belongsTo(Story, { foreignKey: 'storyId' });
  StoryImage.belongsTo(User, { as: 'uploader', foreignKey: 'createdBy' });

  StoryPublication.belongsTo(Story, { as: 'story', foreignKey: 'storyId' });
  StoryPublication.belongsTo(User, { as: 'publisher', foreignKey: 'publishedBy' });
  Story.belongsTo(StoryPublication, { as: 'publication', foreignKey: 'publishedPublicationId', constraints: false });
  ReviewClaim.belongsTo(User, { as: 'moderator', foreignKey: 'moderatorId' });
  EvidenceCheck.belongsTo(User, { as: 'moderator', foreignKey: 'moderatorId' });
  EvidenceCheck.hasMany(CheckAnswer, { as: 'answers', foreignKey: 'checkId' });
  CheckAnswer.belongsTo(EvidenceCheck, { foreignKey: 'checkId' });
  CheckAnswer.belongsTo(User, { as: 'author', foreignKey: 'authorId' });
  AuditEntry.belongsTo(User, { as: 'actor', foreignKey: 'actorId' });
  Follow.belongsTo(User, { as: 'follower', foreignKey: 'followerId' });
  Follow.belongsTo(User, { as: 'builder', foreignKey: 'builderId' });
  Question.belongsTo(Story, { as: 'story', foreignKey: 'storyId' });
  Question.belongsTo(User, { as: 'author', foreignKey: 'authorId' });
}
