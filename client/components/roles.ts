import type { Role } from '../../shared/schemas/auth';
import { ROLES } from '../../shared/schemas/auth';

export const roleLabels: Record<Role, string> = {
  admin: 'Admin',
  interpreter: 'Interpreter',
  curator: 'Curator',
  reviewer: 'Reviewer',
};

export const roleDescriptions: Record<Role, string> = {
  admin: 'Invites people, gives roles, sees everything',
  interpreter: 'Creates projects, traces and measures buildups',
  curator: 'Keeps the analogue library',
  reviewer: 'Comments on and signs off interpretations',
};

export const roleColors: Record<Role, { color: string; textColor: string; borderColor: string }> = {
  admin: { color: '#fbf3dc', textColor: '#7d5f10', borderColor: '#e9c46a' },
  interpreter: { color: '#e2f3f1', textColor: '#1c6f65', borderColor: '#9fd4cd' },
  curator: { color: '#e7eef5', textColor: '#3c6384', borderColor: '#b5c9db' },
  reviewer: { color: '#efebf5', textColor: '#5d4a7d', borderColor: '#cdc2de' },
};

export const roleOptions = ROLES.map((r) => ({ label: roleLabels[r], value: r }));
