import { z } from 'zod';

export const ROLES = ['owner', 'technician', 'front_desk', 'customer'] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

export const ROLE_LABELS: Record<Role, string> = {
  owner: 'Owner',
  technician: 'Technician',
  front_desk: 'Front desk',
  customer: 'Customer',
};

/** Staff roles see the whole shop; a customer sees only their own units and jobs. */
export const STAFF_ROLES: readonly Role[] = ['owner', 'technician', 'front_desk'];
