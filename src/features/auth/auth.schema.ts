import { z } from 'zod';
import { PASSWORD_MAX_LENGTH } from './passwordPolicy';

const email = z.string().trim().toLowerCase().pipe(z.email({ message: 'Enter an e-mail address.' }));
const password = z.string().min(1, 'Enter a password.').max(PASSWORD_MAX_LENGTH * 4);

export const SignInBody = z.object({ email, password }).meta({ id: 'SignInBody' });
export type SignInBody = z.infer<typeof SignInBody>;

export const ForgotPasswordBody = z.object({ email }).meta({ id: 'ForgotPasswordBody' });
export type ForgotPasswordBody = z.infer<typeof ForgotPasswordBody>;

export const SetPasswordBody = z
  .object({ token: z.string().min(10).max(200), password })
  .meta({ id: 'SetPasswordBody' });
export type SetPasswordBody = z.infer<typeof SetPasswordBody>;

export const MembershipView = z.object({
  initiativeId: z.uuid(),
  initiativeName: z.string(),
  role: z.enum(['analyst', 'clinician', 'auditor']),
});

export const MeResponse = z
  .object({
    id: z.uuid(),
    email: z.string(),
    displayName: z.string(),
    isAdmin: z.boolean(),
    memberships: z.array(MembershipView),
  })
  .meta({ id: 'Me' });
export type MeResponse = z.infer<typeof MeResponse>;

export const CreateApiTokenBody = z
  .object({ name: z.string().trim().min(1, 'Name the token after the script that uses it.').max(80) })
  .meta({ id: 'CreateApiTokenBody' });
export type CreateApiTokenBody = z.infer<typeof CreateApiTokenBody>;

export const ApiTokenView = z
  .object({
    id: z.uuid(),
    name: z.string(),
    prefix: z.string(),
    createdAt: z.string(),
    lastUsedAt: z.string().nullable(),
    revokedAt: z.string().nullable(),
  })
  .meta({ id: 'ApiToken' });

export const CreatedApiToken = z
  .object({ token: z.string().describe('The secret, shown this once.'), item: ApiTokenView })
  .meta({ id: 'CreatedApiToken' });
