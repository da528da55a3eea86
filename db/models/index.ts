/**
 * Every table's model. Tables are created by migrations (db/migrations), never by sync();
 * each model names its table and columns as they are (see common.ts).
 */
import type { Sequelize } from 'sequelize';
import { AuthToken, ApiToken, SigninAttempt, initAccess } from './access';
import { Analysis, Run, initAnalyses } from './analyses';
import { AuditEvent, initAudit } from './audit';
import { Extract, ExtractColumn, ExtractIntake, ExtractVersion, initExtracts } from './extracts';
import { Initiative, Membership, Session, User, initIdentity } from './identity';
import { ReviewStep, RunComment, initReview } from './review';
import { initBriefModels } from './briefs';
import { initNotifications } from './notifications';

export * from './access';
export * from './analyses';
export * from './audit';
export * from './extracts';
export * from './identity';
export * from './review';
export * from './notifications';

/** Binds every model to one Sequelize instance (the app's, src/lib/server/db.ts). */
export function initModels(sequelize: Sequelize) {
  initIdentity(sequelize);
  initAccess(sequelize);
  initAudit(sequelize);
  initExtracts(sequelize);
  initAnalyses(sequelize);
  initReview(sequelize);
  return {
    User, Initiative, Membership, Session, AuthToken, SigninAttempt, ApiToken, AuditEvent,
    Extract, ExtractVersion, ExtractColumn, ExtractIntake, Analysis, Run, ReviewStep, RunComment,
    ...initBriefModels(sequelize),
    ...initNotifications(sequelize),
  };
}
