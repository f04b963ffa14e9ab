/**
 * Sequelize models. `initModels(sequelize)` binds every model to a connection
 * (each file's `init…Models`), then declares all associations in one place
 * (associations.ts). Model files import each other only as types, so there
 * is no import cycle among them.
 */
import type { Sequelize } from 'sequelize';
import { initSectionModels } from './section';
import { initBuildupModels } from './buildup';
import { initReportModels } from './report';
import { initDepthModels } from './depth';
import { initNoteModels } from './note';
import { initNotificationModels } from './notification';
import { initReviewModels } from './review';
import { initModelRunModels } from './model-run';
import { initCoreModels } from './core';
import { associateModels } from './associations';

export { User, AuthSession, Project, ProjectMember, AuditEvent, AppMeta, type ProjectRole } from './core';

export function initModels(sequelize: Sequelize) {
  initCoreModels(sequelize);
  initSectionModels(sequelize);
  initBuildupModels(sequelize);
  initReportModels(sequelize);
  initDepthModels(sequelize);
  initNoteModels(sequelize);
  initNotificationModels(sequelize);
  initReviewModels(sequelize);
  initModelRunModels(sequelize);
  associateModels();
}
