import { z } from 'zod';

export const RoleName = z.enum(['analyst', 'clinician', 'auditor']);

export const InviteUserBody = z
  .object({
    email: z.string().trim().toLowerCase().pipe(z.email({ message: 'Enter an e-mail address.' })),
    displayName: z.string().trim().min(2, 'Enter the person\'s name.').max(120),
    isAdmin: z.boolean().default(false),
    /** Optionally add the person to an initiative with a role straight away. */
    membership: z.object({ initiativeId: z.uuid(), role: RoleName }).optional(),
  })
  .meta({ id: 'InviteUserBody' });
export type InviteUserBody = z.infer<typeof InviteUserBody>;

export const UpdateUserBody = z
  .object({ status: z.enum(['active', 'deactivated']) })
  .meta({ id: 'UpdateUserBody' });
export type UpdateUserBody = z.infer<typeof UpdateUserBody>;

export const UserListItem = z
  .object({
    id: z.uuid(),
    email: z.string(),
    displayName: z.string(),
    status: z.enum(['invited', 'active', 'deactivated']),
    /** Whether the person ever set a password; a deactivated account that never did is a revoked invitation. */
    activated: z.boolean(),
    isAdmin: z.boolean(),
    lastSignInAt: z.string().nullable(),
    createdAt: z.string(),
    memberships: z.array(z.object({ initiativeId: z.uuid(), initiativeName: z.string(), role: RoleName, membershipId: z.uuid() })),
  })
  .meta({ id: 'UserListItem' });
export type UserListItem = z.infer<typeof UserListItem>;

export const CreateInitiativeBody = z
  .object({
    name: z.string().trim().min(3, 'Give the initiative a name of at least 3 characters.').max(120),
    organisation: z.string().trim().min(2).max(120),
    description: z.string().trim().max(2000).default(''),
    readersSeeRows: z.boolean().default(false),
  })
  .meta({ id: 'CreateInitiativeBody' });
export type CreateInitiativeBody = z.infer<typeof CreateInitiativeBody>;

export const InitiativeItem = z
  .object({
    id: z.uuid(),
    name: z.string(),
    slug: z.string(),
    organisation: z.string(),
    description: z.string(),
    readersSeeRows: z.boolean(),
    /** Distinct clinicians whose sign-offs a run needs before it is signed off. */
    requiredSignOffs: z.number().int(),
    memberCount: z.number().int(),
    createdAt: z.string(),
  })
  .meta({ id: 'Initiative' });
export type InitiativeItem = z.infer<typeof InitiativeItem>;

export const SetMembershipBody = z
  .object({ userId: z.uuid(), role: RoleName })
  .meta({ id: 'SetMembershipBody' });
export type SetMembershipBody = z.infer<typeof SetMembershipBody>;

export const UpdateInitiativeBody = z
  .object({
    readersSeeRows: z.boolean().optional(),
    description: z.string().trim().max(2000).optional(),
    /** Distinct clinicians (never the run's starter) whose sign-offs a run needs: 1 to 5. */
    requiredSignOffs: z
      .number({ message: 'Give the number of sign-offs as a whole number from 1 to 5.' })
      .int('Give the number of sign-offs as a whole number from 1 to 5.')
      .min(1, 'A run needs at least 1 sign-off.')
      .max(5, 'A run can need at most 5 sign-offs.')
      .optional(),
  })
  .meta({ id: 'UpdateInitiativeBody' });
export type UpdateInitiativeBody = z.infer<typeof UpdateInitiativeBody>;
