import { z } from 'zod';
import type { Role, Specialty } from './roles';
import { roles, specialties } from './roles';

export interface BoardView {
  id: string;
  name: string;
  description: string;
  memberCount: number;
  mySpecialty: Specialty | null;
  /** The specialties that must be present for the board's quorum. */
  requiredSpecialties: Specialty[];
}

export interface BoardMemberView {
  userId: string;
  displayName: string;
  email: string;
  specialty: Specialty;
  roles: Role[];
}

export const createBoardSchema = z.object({
  name: z.string().trim().min(3).max(80),
  description: z.string().trim().max(500).default(''),
});

export const addMembershipSchema = z.object({
  userId: z.uuid(),
  specialty: z.enum(specialties),
});

export const createUserSchema = z.object({
  email: z.email().max(254),
  displayName: z.string().trim().min(2).max(120),
  roles: z.array(z.enum(roles)).max(roles.length).default([]),
  password: z.string().min(12, 'at least 12 characters').max(256).optional(),
});

export const updateUserSchema = z
  .object({
    displayName: z.string().trim().min(2).max(120),
    roles: z.array(z.enum(roles)).max(roles.length),
    isActive: z.boolean(),
  })
  .partial()
  .refine((value) => Object.keys(value).length > 0, 'at least one field to change');

export const rolePolicySchema = z.object({ requiresTotp: z.boolean() });

export interface AdminUserView {
  id: string;
  email: string;
  displayName: string;
  roles: Role[];
  isActive: boolean;
  hasTotp: boolean;
  signInMethod: 'local' | 'saml';
  boards: { boardId: string; boardName: string; specialty: Specialty }[];
  lastSignInAt: string | null;
}

export interface RolePolicyView {
  role: Role;
  requiresTotp: boolean;
}
