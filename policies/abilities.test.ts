/**
 * The role matrix: every role × every action × every subject, in the user's own initiative
 * and in another one. Expected grants come from the role table of the product brief
 * (shared design, product.md, "People and roles"); everything not listed is denied.
 */
import { describe, expect, it } from 'vitest';
import { ACTIONS, SUBJECTS, defineAbilityFor, subject, type Action, type Role, type SubjectName } from './abilities';

const OWN = 'own-initiative';
const OTHER = 'other-initiative';
const USER_ID = 'user-1';

/** The allowed (action, subject) pairs within one's own initiative, per role. */
const GRANTS: Record<Role, Partial<Record<SubjectName, Action[]>>> = {
  analyst: {
    Initiative: ['read'],
    Extract: ['read', 'create', 'update', 'archive'],
    ExtractRows: ['read'],
    Analysis: ['read', 'create', 'update'],
    // cancel: only runs they started (see the rules with conditions below).
    Run: ['read', 'run', 'submit', 'export', 'comment'],
    Comment: ['read'],
    Brief: ['read', 'create', 'update', 'publish', 'export'],
    Plan: ['read', 'create', 'update'],
  },
  clinician: {
    Initiative: ['read'],
    Extract: ['read'],
    Analysis: ['read'],
    Run: ['read', 'comment', 'decide', 'export'],
    Comment: ['read'],
    Brief: ['read', 'export'],
    Plan: ['read'],
  },
  auditor: {
    Initiative: ['read'],
    Extract: ['read'],
    Analysis: ['read'],
    Run: ['read', 'rerun', 'export'],
    Comment: ['read'],
    Brief: ['read', 'export'],
    Plan: ['read'],
    AuditTrail: ['read', 'verify', 'export'],
  },
};

const roles = Object.keys(GRANTS) as Role[];
const cases = roles.flatMap((role) =>
  SUBJECTS.flatMap((type) => ACTIONS.map((action) => ({ role, type, action }))),
);

describe('role matrix', () => {
  it.each(cases)('$role · $action · $type', ({ role, type, action }) => {
    const ability = defineAbilityFor({ id: USER_ID, isAdmin: false, memberships: [{ initiativeId: OWN, role }] });
    const expected = GRANTS[role][type]?.includes(action) ?? false;
    expect(ability.can(action, subject(type, { initiativeId: OWN, startedBy: 'someone-else' }))).toBe(expected);
    // Nothing at all is allowed in an initiative the user is not a member of.
    expect(ability.can(action, subject(type, { initiativeId: OTHER, startedBy: 'someone-else' }))).toBe(false);
  });
});

describe('rules with conditions', () => {
  it('lets clinicians and auditors preview rows only where the initiative allows it', () => {
    for (const role of ['clinician', 'auditor'] as const) {
      const ability = defineAbilityFor({ id: USER_ID, isAdmin: false, memberships: [{ initiativeId: OWN, role }] });
      expect(ability.can('read', subject('ExtractRows', { initiativeId: OWN, readersSeeRows: false }))).toBe(false);
      expect(ability.can('read', subject('ExtractRows', { initiativeId: OWN, readersSeeRows: true }))).toBe(true);
      expect(ability.can('read', subject('ExtractRows', { initiativeId: OTHER, readersSeeRows: true }))).toBe(false);
    }
  });

  it('never lets a user decide on a run they started', () => {
    const ability = defineAbilityFor({ id: USER_ID, isAdmin: false, memberships: [{ initiativeId: OWN, role: 'clinician' }] });
    expect(ability.can('decide', subject('Run', { initiativeId: OWN, startedBy: USER_ID }))).toBe(false);
    expect(ability.can('decide', subject('Run', { initiativeId: OWN, startedBy: 'someone-else' }))).toBe(true);
  });

  it('lets an analyst cancel only the runs they started, never an auditor’s re-run (issue 13)', () => {
    const ability = defineAbilityFor({ id: USER_ID, isAdmin: false, memberships: [{ initiativeId: OWN, role: 'analyst' }] });
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: USER_ID }))).toBe(true);
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: 'auditor-1', verification: true }))).toBe(false);
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: 'analyst-2' }))).toBe(false);
    expect(ability.can('cancel', subject('Run', { initiativeId: OTHER, startedBy: USER_ID }))).toBe(false);
  });

  it('lets an administrator cancel anyone’s run in an initiative they belong to', () => {
    const ability = defineAbilityFor({ id: USER_ID, isAdmin: true, memberships: [{ initiativeId: OWN, role: 'clinician' }] });
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: 'analyst-2' }))).toBe(true);
    expect(ability.can('cancel', subject('Run', { initiativeId: OTHER, startedBy: 'analyst-2' }))).toBe(false);
  });

  it('lets an auditor cancel only their own verification re-runs', () => {
    const ability = defineAbilityFor({ id: USER_ID, isAdmin: false, memberships: [{ initiativeId: OWN, role: 'auditor' }] });
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: USER_ID, verification: true }))).toBe(true);
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: 'someone-else', verification: true }))).toBe(false);
    expect(ability.can('cancel', subject('Run', { initiativeId: OWN, startedBy: USER_ID, verification: false }))).toBe(false);
    expect(ability.can('cancel', subject('Run', { initiativeId: OTHER, startedBy: USER_ID, verification: true }))).toBe(false);
  });

  it('keeps different roles in different initiatives apart', () => {
    const ability = defineAbilityFor({
      id: USER_ID,
      isAdmin: false,
      memberships: [{ initiativeId: OWN, role: 'analyst' }, { initiativeId: OTHER, role: 'clinician' }],
    });
    expect(ability.can('run', subject('Run', { initiativeId: OWN }))).toBe(true);
    expect(ability.can('run', subject('Run', { initiativeId: OTHER }))).toBe(false);
    expect(ability.can('decide', subject('Run', { initiativeId: OTHER, startedBy: 'someone-else' }))).toBe(true);
    expect(ability.can('decide', subject('Run', { initiativeId: OWN, startedBy: 'someone-else' }))).toBe(false);
  });
});

describe('administrators', () => {
  const admin = defineAbilityFor({ id: USER_ID, isAdmin: true, memberships: [] });

  it('manage people, memberships and initiatives', () => {
    for (const action of ACTIONS) {
      expect(admin.can(action, 'User')).toBe(true);
      expect(admin.can(action, 'Membership')).toBe(true);
    }
    expect(admin.can('create', subject('Initiative', { initiativeId: OWN }))).toBe(true);
    expect(admin.can('read', 'Outbox')).toBe(true);
  });

  it('see no cohort data unless they are members', () => {
    for (const type of ['Extract', 'ExtractRows', 'Analysis', 'Run', 'Comment', 'Brief'] as const) {
      for (const action of ACTIONS) {
        expect(admin.can(action, subject(type, { initiativeId: OWN }))).toBe(false);
      }
    }
    expect(admin.can('read', subject('AuditTrail', { initiativeId: OWN }))).toBe(false);
    expect(admin.can('read', subject('AuditTrail', {}))).toBe(true);
  });
});

describe('deny by default', () => {
  it('gives a signed-out caller nothing', () => {
    const ability = defineAbilityFor(null);
    for (const type of SUBJECTS) for (const action of ACTIONS) expect(ability.can(action, type)).toBe(false);
  });
});
