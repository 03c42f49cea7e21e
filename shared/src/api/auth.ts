import { z } from 'zod';
import type { Role, Specialty } from './roles';

export const loginRequestSchema = z.object({
  email: z.email().max(254),
  password: z.string().min(1).max(1024),
  /** Six-digit TOTP code, required once the account has a second factor. */
  code: z
    .string()
    .regex(/^\d{6}$/, 'a six-digit code')
    .optional(),
});
export type LoginRequest = z.infer<typeof loginRequestSchema>;

/** Passwords of local accounts: at least 12 characters (OWASP ASVS 5.0 §6.2). */
export const passwordSchema = z.string().min(12, 'at least 12 characters').max(256);

export const totpConfirmSchema = z.object({
  code: z.string().regex(/^\d{6}$/, 'a six-digit code'),
});

export interface BoardMembershipView {
  boardId: string;
  boardName: string;
  specialty: Specialty;
}

export interface CurrentUser {
  id: string;
  email: string;
  displayName: string;
  roles: Role[];
  boards: BoardMembershipView[];
  signInMethod: 'local' | 'saml';
  hasTotp: boolean;
  /** The user's role requires a second factor that is not set up yet: only enrolment is allowed. */
  mustEnrolTotp: boolean;
}

export interface TotpSetup {
  secret: string;
  otpauthUri: string;
}
