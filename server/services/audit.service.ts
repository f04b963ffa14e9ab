import { AuditEvent } from '../models/index';
import type { Transaction } from 'sequelize';

/** Append one line to the audit trail. */
export async function audit(
  userId: number | null,
  action: string,
  targetType: string | null = null,
  targetId: string | number | null = null,
  details: unknown = null,
  transaction?: Transaction,
) {
  await AuditEvent.create(
    { userId, action, targetType, targetId: targetId === null ? null : String(targetId), details },
    { transaction },
  );
}
