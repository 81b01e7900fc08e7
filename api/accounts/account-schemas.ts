import { z } from 'zod';
import { SlugSchema } from '../../core/naming/dataset-slug.ts';
import { EmailSchema } from '../auth/session-routes.ts';
import { ROLES } from '../db/schema.ts';

/**
 * New passwords: at least 12 characters (NIST SP 800-63B asks for at least 8 and a maximum of
 * at least 64; 12 is common practice for admin accounts), at most 256 so hashing stays bounded.
 */
export const NewPasswordSchema = z.string().min(12, 'use at least 12 characters').max(256, 'use at most 256 characters');

export const RoleSchema = z.enum(ROLES);

export const CreateUserBody = z
  .object({
    email: EmailSchema,
    role: RoleSchema,
    /** Absent: a random password is made and shown once in the answer. */
    password: NewPasswordSchema.optional(),
  })
  .strict();

export const UpdateUserBody = z
  .object({
    role: RoleSchema.optional(),
    disabled: z.boolean().optional(),
    password: NewPasswordSchema.optional(),
  })
  .strict()
  .refine((b) => b.role !== undefined || b.disabled !== undefined || b.password !== undefined, { message: 'name at least one of role, disabled, password' });

export const CreateTenantBody = z
  .object({
    slug: SlugSchema,
    name: z.string().trim().min(1).max(200),
    /** The tenant's first admin; absent: add users later with POST /v1/admin/users?tenant=SLUG. */
    admin: z.object({ email: EmailSchema, password: NewPasswordSchema.optional() }).strict().optional(),
  })
  .strict();

/** 144 random bits, base64url: a password made for someone to change or keep in a manager. */
export function randomPassword(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(18));
  let bin = '';
  for (const b of bytes) bin += String.fromCharCode(b);
  return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_');
}
