/**
 * The ordered list of migrations. Add a new file `NNNN-what.ts` exporting
 * `up`/`down` and append it here; never edit a migration that has landed.
 */
import type { MigrationContext } from '../migrate';
import * as m0001 from './0001-foundation';

export interface Migration {
  name: string;
  up(ctx: MigrationContext): Promise<void>;
  down(ctx: MigrationContext): Promise<void>;
}

export const migrations: Migration[] = [{ name: '0001-foundation', ...m0001 }];
