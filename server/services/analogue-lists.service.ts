/** Analogue library: controlled lists (settings, carbonate factories, climates), the ICS chart, saved searches. */
import { QueryTypes, type Transaction } from 'sequelize';
import { notFound } from '../errors';
import { audit } from './audit.service';
import { ICS_EDITION, ICS_UNITS } from '../../shared/ics-chart';
import {
  type ControlledLists,
  type IcsChartResponse,
  type ListItem,
  type ListItemInput,
  type ListName,
  type SavedSearch,
  type SavedSearchInput,
} from '../../shared/schemas/analogues';
import {
  type Actor,
  write,
  type Row,
  invalid,
  db,
} from './analogue-rows';

// ---- lists, chart, saved searches ----------------------------------------------------------------

export async function readLists(transaction?: Transaction): Promise<ControlledLists> {
  const rows = await db().query<{ list: ListName; value: string; label: string }>('SELECT list, value, label FROM analogue_lists ORDER BY list, position, value', {
    type: QueryTypes.SELECT,
    transaction,
  });
  const out = { setting: [], factory: [], climate: [] } as ControlledLists;
  for (const r of rows) out[r.list].push({ value: r.value, label: r.label });
  return out;
}

export async function addListItem(actor: Actor, list: ListName, v: ListItemInput): Promise<ListItem> {
  await write(async (transaction) => {
    // ON CONFLICT: the same value added by someone else, before or at the same moment, is one answer.
    const [added] = await db().query(
      'INSERT INTO analogue_lists (list, value, label, position) VALUES ($1::varchar, $2, $3, (SELECT coalesce(max(position), 0) + 1 FROM analogue_lists WHERE list = $1::varchar)) ON CONFLICT (list, value) DO NOTHING RETURNING value',
      { bind: [list, v.value, v.label], type: QueryTypes.SELECT, transaction },
    );
    if (!added) throw invalid(409, 'list_value_exists', 'value', `"${v.value}" is already in the ${list} list`);
    await audit(actor.id, 'analogue.list.add', 'analogue_list', list, v, transaction);
  });
  return { value: v.value, label: v.label };
}

export async function removeListItem(actor: Actor, list: ListName, value: string) {
  await write(async (transaction) => {
    // Locked first: a save using the value holds it FOR SHARE, so the count below sees every use that lands.
    const [row] = await db().query('SELECT 1 FROM analogue_lists WHERE list = $1 AND value = $2 FOR UPDATE', { bind: [list, value], type: QueryTypes.SELECT, transaction });
    if (!row) throw notFound('List value');
    const [{ n }] = await db().query<{ n: number }>(`SELECT count(*)::int AS n FROM analogues WHERE ${list} = $1`, { bind: [value], type: QueryTypes.SELECT, transaction });
    if (n > 0) throw invalid(409, 'list_value_in_use', 'value', `"${value}" is used by ${n} analogue(s); change them first`);
    await db().query('DELETE FROM analogue_lists WHERE list = $1 AND value = $2', { bind: [list, value], transaction });
    await audit(actor.id, 'analogue.list.remove', 'analogue_list', list, { value }, transaction);
  });
}

export function icsChart(): IcsChartResponse {
  return { edition: ICS_EDITION, units: [...ICS_UNITS] };
}

export async function listSavedSearches(actor: Actor): Promise<SavedSearch[]> {
  const rows = await db().query<Row>('SELECT id, name, query, created_at FROM analogue_saved_searches WHERE user_id = $1 ORDER BY id', { bind: [actor.id], type: QueryTypes.SELECT });
  return rows.map((r) => ({ id: r.id, name: r.name, query: r.query, createdAt: new Date(r.created_at).toISOString() }));
}

export async function saveSearch(actor: Actor, v: SavedSearchInput): Promise<SavedSearch> {
  const id = await write(async (transaction) => {
    const [rows] = (await db().query('INSERT INTO analogue_saved_searches (user_id, name, query) VALUES ($1, $2, $3) RETURNING id', { bind: [actor.id, v.name, v.query], transaction })) as [{ id: number }[], unknown];
    await audit(actor.id, 'analogue.search.save', 'analogue_saved_search', rows[0].id, { name: v.name }, transaction);
    return rows[0].id;
  });
  return (await listSavedSearches(actor)).find((s) => s.id === id)!;
}

export async function deleteSavedSearch(actor: Actor, id: number) {
  await write(async (transaction) => {
    const [rows] = (await db().query('DELETE FROM analogue_saved_searches WHERE id = $1 AND user_id = $2 RETURNING id', { bind: [id, actor.id], transaction })) as [unknown[], unknown];
    if (!rows.length) throw notFound('Saved search');
    await audit(actor.id, 'analogue.search.delete', 'analogue_saved_search', id, null, transaction);
  });
}
