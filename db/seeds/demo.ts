/**
 * The demo organisation: Tern Valley Health Partnership, a fictional three-hospital
 * system, its two QI initiatives and one demo account per role (db/seeds/demo.json, which
 * `npm start` also reads to print the accounts). Everything here is invented. The demo
 * password is public (README), so these accounts must never exist in a production
 * database: the seed refuses to run there.
 */
import demo from './demo.json' with { type: 'json' };
import type { Role } from '../models';

export const DEMO_ORGANISATION = demo.organisation;
export const DEMO_PASSWORD = demo.password;
export const DEMO_DOMAIN = demo.domain;
export const DEMO_INITIATIVES = demo.initiatives;
export const DEMO_USERS = demo.users as { local: string; displayName: string; role: Role | null; isAdmin: boolean; summary: string }[];

export const demoEmail = (local: string) => `${local}@${DEMO_DOMAIN}`;
