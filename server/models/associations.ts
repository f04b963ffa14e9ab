/**
 * Every association between the models, in one place. Called once by
 * `initModels` after all models are bound to the connection; the `as` names
 * are the ones services use in `include`.
 */
import { AuthSession, Project, ProjectMember, User } from './core';
import { Section, SectionCalibration } from './section';
import { SegyUpload } from './segy';
import { Buildup } from './buildup';
import { BuildupReportRow } from './report';
import { NoteMessage, NoteThread } from './note';
import { BuildupVersion, ReviewTransition } from './review';
import { ModelRun } from './model-run';

export function associateModels() {
  // accounts and projects
  AuthSession.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Project.belongsTo(User, { foreignKey: 'createdById', as: 'createdBy' });
  Project.belongsToMany(User, { through: ProjectMember, foreignKey: 'projectId', otherKey: 'userId', as: 'members' });
  User.belongsToMany(Project, { through: ProjectMember, foreignKey: 'userId', otherKey: 'projectId', as: 'projects' });
  ProjectMember.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  ProjectMember.belongsTo(Project, { foreignKey: 'projectId', as: 'project' });

  // sections and their calibrations
  Section.belongsTo(Project, { foreignKey: 'projectId', as: 'project' });
  Section.belongsTo(User, { foreignKey: 'uploadedById', as: 'uploadedBy' });
  Section.belongsTo(SegyUpload, { foreignKey: 'segyUploadId', as: 'segyUpload' });
  Section.hasMany(SectionCalibration, { foreignKey: 'sectionId', as: 'calibrations' });
  SectionCalibration.belongsTo(Section, { foreignKey: 'sectionId', as: 'section' });
  SectionCalibration.belongsTo(User, { foreignKey: 'createdBy', as: 'author' });

  // buildups, their reports, kept versions, review and model runs
  Buildup.belongsTo(Section, { foreignKey: 'sectionId', as: 'section' });
  Buildup.belongsTo(User, { foreignKey: 'updatedById', as: 'updatedBy' });
  Section.hasMany(Buildup, { foreignKey: 'sectionId', as: 'buildups' });
  BuildupReportRow.belongsTo(Buildup, { foreignKey: 'buildupId', as: 'buildup' });
  BuildupVersion.belongsTo(User, { foreignKey: 'savedById', as: 'savedBy' });
  BuildupVersion.belongsTo(Buildup, { foreignKey: 'buildupId', as: 'buildup' });
  ReviewTransition.belongsTo(User, { foreignKey: 'actorId', as: 'actor' });
  ReviewTransition.belongsTo(Buildup, { foreignKey: 'buildupId', as: 'buildup' });
  ModelRun.belongsTo(User, { foreignKey: 'createdById', as: 'createdBy' });
  ModelRun.belongsTo(Buildup, { foreignKey: 'buildupId', as: 'buildup' });

  // Note pins
  NoteThread.belongsTo(Section, { foreignKey: 'sectionId', as: 'section' });
  NoteThread.hasMany(NoteMessage, { foreignKey: 'threadId', as: 'messages' });
  NoteMessage.belongsTo(NoteThread, { foreignKey: 'threadId', as: 'thread' });
  NoteMessage.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
}
