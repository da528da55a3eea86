/**
 * Who may do what, per initiative role (the role table in the product brief). One
 * ability definition per role, built from the user's memberships; anything not granted
 * here is denied. Every endpoint and page asks through `authorize` or `can`.
 *
 * Subjects carry the `initiativeId` they belong to, so a grant in one initiative never
 * reaches another. Row-level security in PostgreSQL enforces the same boundary a second
 * time (policies/rls).
 */
import { AbilityBuilder, createMongoAbility, subject as tagSubject, type MongoAbility, type MongoQuery } from '@casl/ability';

export type Role = 'analyst' | 'clinician' | 'auditor';

export const ACTIONS = [
  'read', 'create', 'update', 'archive', 'run', 'cancel', 'submit', 'comment', 'decide',
  'publish', 'verify', 'rerun', 'export', 'manage',
] as const;
export type Action = (typeof ACTIONS)[number];

export const SUBJECTS = [
  'Initiative', 'Extract', 'ExtractRows', 'Analysis', 'Run', 'Comment', 'Brief', 'AuditTrail',
  // The initiative's plan: its sample-size plan and its register of prespecified modifiers.
  'Plan',
  'User', 'Membership', 'Outbox',
] as const;
export type SubjectName = (typeof SUBJECTS)[number];

/** The fields of a subject that rules look at. */
export interface SubjectFields {
  initiativeId?: string;
  /** The initiative lets clinicians and auditors preview rows. */
  readersSeeRows?: boolean;
  /** Who started a run (nobody signs off their own work). */
  startedBy?: string;
  /** The run is a re-run that verifies an earlier run. */
  verification?: boolean;
}

type TaggedSubject = { __caslSubjectType__: SubjectName } & SubjectFields;
export type AppAbility = MongoAbility<[Action, SubjectName | TaggedSubject], MongoQuery>;

export interface AbilityUser {
  id: string;
  isAdmin: boolean;
  memberships: readonly { initiativeId: string; role: Role }[];
}

// The builder is untyped in its conditions (CASL types string subjects' conditions as
// `never`); the abilities it builds are typed as AppAbility.
type Builder = AbilityBuilder<MongoAbility>;
type Can = Builder['can'];
type Cannot = Builder['cannot'];

/** What an analyst may do within one initiative. */
function analystRules(can: Can, initiativeId: string, userId: string): void {
  const scope = { initiativeId };
  can('read', ['Initiative', 'Extract', 'ExtractRows', 'Analysis', 'Run', 'Comment', 'Brief', 'Plan'], scope);
  can(['create', 'update'], 'Plan', scope);
  can(['create', 'update', 'archive'], 'Extract', scope);
  can(['create', 'update'], 'Analysis', scope);
  can(['run', 'submit', 'export'], 'Run', scope);
  // Only the runs they started themselves (never an auditor's verification re-run).
  can('cancel', 'Run', { initiativeId, startedBy: userId });
  can('comment', 'Run', scope);
  can(['create', 'update', 'publish', 'export'], 'Brief', scope);
}

/** What a clinician may do within one initiative: read, comment, decide. */
function clinicianRules(can: Can, cannot: Cannot, initiativeId: string, userId: string): void {
  const scope = { initiativeId };
  can('read', ['Initiative', 'Extract', 'Analysis', 'Run', 'Comment', 'Brief', 'Plan'], scope);
  const rowsAllowed: MongoQuery = { initiativeId, readersSeeRows: true };
  const ownRun: MongoQuery = { startedBy: userId };
  can('read', 'ExtractRows', rowsAllowed);
  can(['comment', 'decide', 'export'], 'Run', scope);
  can('export', 'Brief', scope);
  cannot('decide', 'Run', ownRun);
}

/** What an auditor may do within one initiative: read everything, verify, re-run. */
function auditorRules(can: Can, initiativeId: string, userId: string): void {
  const scope = { initiativeId };
  can('read', ['Initiative', 'Extract', 'Analysis', 'Run', 'Comment', 'Brief', 'AuditTrail', 'Plan'], scope);
  const rowsAllowed: MongoQuery = { initiativeId, readersSeeRows: true };
  can('read', 'ExtractRows', rowsAllowed);
  can(['verify', 'export'], 'AuditTrail', scope);
  can(['rerun', 'export'], 'Run', scope);
  // Their own verification re-runs are the only runs they may stop.
  const ownVerification: MongoQuery = { initiativeId, startedBy: userId, verification: true };
  can('cancel', 'Run', ownVerification);
  can('export', 'Brief', scope);
}

/** Builds a user's abilities from their memberships and admin flag. */
export function defineAbilityFor(user: AbilityUser | null): AppAbility {
  const { can, cannot, build } = new AbilityBuilder<MongoAbility>(createMongoAbility);
  if (!user) return build() as AppAbility;
  for (const membership of user.memberships) {
    if (membership.role === 'analyst') analystRules(can, membership.initiativeId, user.id);
    else if (membership.role === 'clinician') clinicianRules(can, cannot, membership.initiativeId, user.id);
    else if (membership.role === 'auditor') auditorRules(can, membership.initiativeId, user.id);
  }
  if (user.isAdmin) {
    // Administrators run the organisation's accounts; cohort data stay out of reach
    // unless they are also members (then the rules above apply).
    can('manage', ['User', 'Membership']);
    can(['read', 'create', 'update'], 'Initiative');
    can('read', 'Outbox');
    can('read', 'AuditTrail', { initiativeId: { $exists: false } });
    // Any run of an initiative they belong to, whoever started it (an administrator
    // outside an initiative sees none of its runs).
    const memberOf = user.memberships.map((membership) => membership.initiativeId);
    if (memberOf.length > 0) can('cancel', 'Run', { initiativeId: { $in: memberOf } });
  }
  return build() as AppAbility;
}

/** Tags a plain object as a subject for ability checks. */
export function subject(type: SubjectName, fields: SubjectFields): { __caslSubjectType__: SubjectName } & SubjectFields {
  return tagSubject(type, { ...fields }) as { __caslSubjectType__: SubjectName } & SubjectFields;
}
