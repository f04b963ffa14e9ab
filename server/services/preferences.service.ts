/** A person's display preferences (migration 0010: `users.length_unit`). */
import { QueryTypes } from 'sequelize';
import { ctx } from '../context';
import { audit } from './audit.service';
import type { Actor } from './project.service';
import { DEFAULT_LENGTH_UNIT, isLengthUnit, type LengthUnit } from '../../shared/units';
import type { Preferences } from '../../shared/schemas/register';

/** The length unit the person chose ('m' when unknown). Reports and exports use it unless asked for another. */
export async function lengthUnitOf(userId: number): Promise<LengthUnit> {
  const rows = await ctx().sequelize.query<{ length_unit: string }>('SELECT length_unit FROM users WHERE id = $id', {
    bind: { id: userId },
    type: QueryTypes.SELECT,
  });
  const u = rows[0]?.length_unit;
  return isLengthUnit(u) ? u : DEFAULT_LENGTH_UNIT;
}

export async function getPreferences(actor: Actor): Promise<Preferences> {
  return { lengthUnit: await lengthUnitOf(actor.id) };
}

export async function putPreferences(actor: Actor, input: Preferences): Promise<Preferences> {
  await ctx().sequelize.transaction(async (transaction) => {
    await ctx().sequelize.query('UPDATE users SET length_unit = $unit, updated_at = now() WHERE id = $id', {
      bind: { unit: input.lengthUnit, id: actor.id },
      transaction,
    });
    await audit(actor.id, 'user.preferences', 'user', actor.id, input, transaction);
  });
  return getPreferences(actor);
}
