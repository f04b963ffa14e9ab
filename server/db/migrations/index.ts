/**
 * The ordered list of migrations. Add a new file `NNNN-what.ts` exporting
 * `up`/`down` and append it here; never edit a migration that has landed.
 */
import type { MigrationContext } from './context';
import * as m0001 from './0001-foundation';
import * as m0002 from './0002-sections';
import * as m0003 from './0003-buildups';
import * as m0004 from './0004-project-owner';
import * as m0005 from './0005-job-workers';
import * as m0006 from './0006-review';
import * as m0007 from './0007-notes';
import * as m0008 from './0008-notifications';
import * as m0009 from './0009-reports';
import * as m0010 from './0010-units';
import * as m0011 from './0011-analogues';
import * as m0012 from './0012-segy';
import * as m0013 from './0013-model-runs';
import * as m0014 from './0014-depth-pyramids';
import * as m0015 from './0015-rate-limits';
import * as m0016 from './0016-auth-change-notify';

export interface Migration {
  name: string;
  up(ctx: MigrationContext): Promise<void>;
  down(ctx: MigrationContext): Promise<void>;
}

export const migrations: Migration[] = [
  { name: '0001-foundation', ...m0001 },
  { name: '0002-sections', ...m0002 },
  { name: '0003-buildups', ...m0003 },
  { name: '0004-project-owner', ...m0004 },
  { name: '0005-job-workers', ...m0005 },
  { name: '0006-review', ...m0006 },
  { name: '0007-notes', ...m0007 },
  { name: '0008-notifications', ...m0008 },
  { name: '0009-reports', ...m0009 },
  { name: '0010-units', ...m0010 },
  { name: '0011-analogues', ...m0011 },
  { name: '0012-segy', ...m0012 },
  { name: '0013-model-runs', ...m0013 },
  { name: '0014-depth-pyramids', ...m0014 },
  { name: '0015-rate-limits', ...m0015 },
  { name: '0016-auth-change-notify', ...m0016 },
];
