/**
 * Analogue library (issue #9): analogues (promoted from a measured buildup,
 * entered by hand or imported), the curators' controlled lists, saved searches
 * per person, and a library generation counter that every change bumps (the
 * search cache keys on it).
 *
 * Index design for ~100,000 rows (tests/bench/library.bench.ts):
 * - one b-tree per facet column and per metric column, so a selective facet or
 *   range narrows the scan (bitmap AND of several);
 * - GIN on `tags` (array containment `@>`) and on the generated `tsv` column
 *   (full text over name, citation and notes, weights A/B/C);
 * - `metric_vec` (float8[], the metrics in METRICS order, log10 where the metric
 *   spans decades) is precomputed on write: Look-alikes by metrics is one
 *   sequential scan computing the weighted z-score distance per row in SQL
 *   (no per-row JSON), top k by a heap sort;
 * - `shape` (float8[SHAPE_SAMPLES], the normalised profile) comes with
 *   `shape_paa` (its 8-block piecewise aggregate approximation, a lower bound
 *   of the Euclidean distance) and a GiST index on `cube(shape_paa)` (the
 *   `cube` extension that Debian's postgresql-15 package ships, marked trusted
 *   so a database owner may create it): Look-alikes by shape takes the nearest
 *   candidates on that index (`<->`), computes the exact distance on them and
 *   checks the bound (a 64-dimensional index would visit most of itself).
 */
import type { MigrationContext } from './context';

export const METRIC_COLUMNS = [
  'height_m',
  'base_width_m',
  'aspect_ratio',
  'area_m2',
  'volume_m3',
  'top_width_m',
  'trajectory_deg',
  'net_backstep_m',
  'net_aggradation_m',
  'flank_angle_deg',
  'flank_max_deg',
  'cycle_count',
];

export async function up({ sequelize }: MigrationContext) {
  const q = (sql: string) => sequelize.query(sql);
  await q(`CREATE TABLE analogue_lists (
    list varchar(20) NOT NULL CHECK (list IN ('setting', 'factory', 'climate')),
    value varchar(40) NOT NULL,
    label varchar(80) NOT NULL,
    position integer NOT NULL DEFAULT 0,
    PRIMARY KEY (list, value)
  )`);
  await q(`CREATE TABLE analogues (
    id serial PRIMARY KEY,
    name varchar(160) NOT NULL,
    status varchar(10) NOT NULL DEFAULT 'accepted' CHECK (status IN ('pending', 'accepted', 'declined')),
    source varchar(10) NOT NULL CHECK (source IN ('promoted', 'hand', 'import')),
    setting varchar(40),
    factory varchar(40),
    climate varchar(40),
    engine_class varchar(20),
    class_override varchar(20),
    class_override_reason text,
    class varchar(20) GENERATED ALWAYS AS (coalesce(class_override, engine_class)) STORED,
    ics_unit varchar(60),
    period varchar(60),
    epoch varchar(60),
    stage varchar(60),
    age_ma double precision,
    latitude double precision CHECK (latitude BETWEEN -90 AND 90),
    longitude double precision CHECK (longitude BETWEEN -180 AND 180),
    tags text[] NOT NULL DEFAULT '{}',
    notes text NOT NULL DEFAULT '',
    citation jsonb,
    citation_text text,
    year integer,
    basis varchar(10),
    basis_velocity_ms double precision,
    ${METRIC_COLUMNS.map((c) => `${c} double precision`).join(',\n    ')},
    metric_vec double precision[],
    shape double precision[],
    profile jsonb,
    snapshot jsonb,
    ranges jsonb,
    crop_key varchar(200),
    buildup_id integer,
    buildup_version integer,
    section_id integer,
    project_id integer,
    requested_by_id integer REFERENCES users(id) ON DELETE SET NULL,
    decided_by_id integer REFERENCES users(id) ON DELETE SET NULL,
    decline_reason text,
    created_by_id integer REFERENCES users(id) ON DELETE SET NULL,
    version integer NOT NULL DEFAULT 0,
    created_at timestamptz NOT NULL DEFAULT now(),
    updated_at timestamptz NOT NULL DEFAULT now(),
    tsv tsvector GENERATED ALWAYS AS (
      setweight(to_tsvector('english', coalesce(name, '')), 'A') ||
      setweight(to_tsvector('english', coalesce(citation_text, '')), 'B') ||
      setweight(to_tsvector('english', coalesce(notes, '')), 'C')
    ) STORED
  )`);
  await q('CREATE EXTENSION IF NOT EXISTS cube');
  // shapes are indexed by their 8-block piecewise aggregate approximation (a lower bound of the distance, see
  // shared/analogue-shape.ts): nearest neighbours on the small index, then the exact distance on a few candidates
  await q(`ALTER TABLE analogues ADD COLUMN shape_paa double precision[]`);
  await q(`ALTER TABLE analogues ALTER COLUMN shape_paa SET STORAGE PLAIN`);
  await q(`CREATE INDEX analogues_shape_paa_idx ON analogues USING gist (cube(shape_paa))`);
  // keep the heap narrow for the scans of search and Look-alikes: the shape array (≈ 0.5 kB), profile,
  // snapshot, ranges and citation live out of line (TOAST) once a row passes 256 bytes…
  await q(`ALTER TABLE analogues SET (toast_tuple_target = 256)`);
  for (const c of ['shape', 'profile', 'snapshot', 'ranges', 'citation']) await q(`ALTER TABLE analogues ALTER COLUMN ${c} SET STORAGE EXTERNAL`);
  // …while the small arrays every scan reads stay inline and uncompressed (no detoasting per row)
  for (const c of ['metric_vec', 'tags']) await q(`ALTER TABLE analogues ALTER COLUMN ${c} SET STORAGE PLAIN`);
  for (const c of ['status', 'setting', 'factory', 'climate', 'class', 'period', 'age_ma', 'latitude', 'longitude', 'year', 'updated_at', 'buildup_id', ...METRIC_COLUMNS])
    await q(`CREATE INDEX analogues_${c}_idx ON analogues (${c})`);
  await q(`CREATE INDEX analogues_lower_name_idx ON analogues (lower(name))`);
  await q(`CREATE INDEX analogues_tags_idx ON analogues USING gin (tags)`);
  await q(`CREATE INDEX analogues_tsv_idx ON analogues USING gin (tsv)`);

  await q(`CREATE TABLE analogue_saved_searches (
    id serial PRIMARY KEY,
    user_id integer NOT NULL REFERENCES users(id) ON DELETE CASCADE,
    name varchar(120) NOT NULL,
    query text NOT NULL,
    created_at timestamptz NOT NULL DEFAULT now()
  )`);
  await q(`CREATE INDEX analogue_saved_searches_user_idx ON analogue_saved_searches (user_id, id)`);

  // one row; every statement changing analogues or the lists bumps the generation (cache key of searches)
  await q(`CREATE TABLE analogue_library_state (id integer PRIMARY KEY CHECK (id = 1), generation bigint NOT NULL)`);
  await q(`INSERT INTO analogue_library_state VALUES (1, 0)`);
  await q(`CREATE FUNCTION analogue_library_bump() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN UPDATE analogue_library_state SET generation = generation + 1 WHERE id = 1; RETURN NULL; END $$`);
  await q(`CREATE TRIGGER analogues_bump AFTER INSERT OR UPDATE OR DELETE ON analogues FOR EACH STATEMENT EXECUTE FUNCTION analogue_library_bump()`);
  await q(`CREATE TRIGGER analogue_lists_bump AFTER INSERT OR UPDATE OR DELETE ON analogue_lists FOR EACH STATEMENT EXECUTE FUNCTION analogue_library_bump()`);

  // the controlled lists' first values (trade terms); curators add and remove
  const lists: [string, string, string][] = [
    ['setting', 'isolated-platform', 'Isolated platform'],
    ['setting', 'attached-platform', 'Attached platform'],
    ['setting', 'pinnacle', 'Pinnacle'],
    ['setting', 'atoll-like', 'Atoll-like'],
    ['setting', 'bank', 'Bank'],
    ['factory', 'tropical', 'Tropical'],
    ['factory', 'cool-water', 'Cool-water'],
    ['factory', 'mud-mound', 'Mud-mound'],
    ['climate', 'tropical', 'Tropical'],
    ['climate', 'subtropical', 'Subtropical'],
    ['climate', 'temperate', 'Temperate'],
    ['climate', 'arid', 'Arid'],
  ];
  await sequelize.query(`INSERT INTO analogue_lists (list, value, label, position) VALUES ${lists.map((_, i) => `($${4 * i + 1}, $${4 * i + 2}, $${4 * i + 3}, $${4 * i + 4})`).join(', ')}`, {
    bind: lists.flatMap((l, i) => [...l, i]),
  });
}

export async function down({ sequelize }: MigrationContext) {
  await sequelize.query('DROP TABLE IF EXISTS analogue_saved_searches');
  await sequelize.query('DROP TABLE IF EXISTS analogues');
  await sequelize.query('DROP TABLE IF EXISTS analogue_lists');
  await sequelize.query('DROP TABLE IF EXISTS analogue_library_state');
  await sequelize.query('DROP FUNCTION IF EXISTS analogue_library_bump()');
}
