// The history store's tables. Documented for people who query the file from python's sqlite3 in README.md
// ("History store"). A file is ours when its application_id is APPLICATION_ID; user_version is the schema version
// and MIGRATIONS[v] takes a file from version v to v + 1.

/** 'FLRL' as a big-endian 32-bit integer: marks the file as a floorline history store. */
export const APPLICATION_ID = 0x464c524c;

/** Trend resolutions: the snapshot interval, 1 s, 1 min and 1 h. */
export const LEVELS = ['snap', '1s', '1m', '1h'] as const;
export type Level = (typeof LEVELS)[number];

// The snapshot level is keyed by time first: its rows arrive 10 a second for every series and are kept minutes,
// so appending in key order matters more than reading one series (its table stays small). Coarser levels are
// keyed by series first, so a long query of one series is one range scan.
const trendTable = (level: Level): string => `
CREATE TABLE trend_${level} (
  series INTEGER NOT NULL REFERENCES series(id),
  run INTEGER NOT NULL REFERENCES runs(id),
  k INTEGER NOT NULL,          -- interval index: samples [k·length, (k+1)·length) of the run's sample time
  n INTEGER NOT NULL,          -- Welch segments (or snapshots) that end inside the interval
  power REAL NOT NULL,         -- mean power over them (unit², or unit²/Hz for floorDensity)
  min REAL NOT NULL,           -- smallest RMS (or density) of one of them
  max REAL NOT NULL,           -- largest
  PRIMARY KEY ${level === 'snap' ? '(run, k, series)' : '(series, run, k)'}
) WITHOUT ROWID;`;

const VERSION_1 = `
CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE runs (
  id INTEGER PRIMARY KEY,
  command TEXT NOT NULL,
  source TEXT NOT NULL,
  pid INTEGER NOT NULL,
  sample_rate REAL NOT NULL,
  first_sample INTEGER NOT NULL,
  start_wall_ms REAL NOT NULL,  -- wall time of first_sample, ms since 1970 UTC
  start_wall TEXT NOT NULL,
  settings TEXT NOT NULL,       -- analysis settings, JSON
  level_samples TEXT NOT NULL   -- interval length in samples of each level, JSON {"snap": …, "1s": …}
);
CREATE TABLE series (
  id INTEGER PRIMARY KEY,
  channel TEXT NOT NULL,
  quantity TEXT NOT NULL,       -- bandRms | floorDensity | mainsTotal | strongestLine
  band_low REAL,                -- Hz, NULL for per-channel quantities
  band_high REAL,
  unit TEXT NOT NULL            -- unit of min/max (V for bandRms, V/√Hz for floorDensity)
);
CREATE UNIQUE INDEX series_key ON series (channel, quantity, ifnull(band_low, -1), ifnull(band_high, -1));
${LEVELS.map(trendTable).join('\n')}
CREATE TABLE events (
  id INTEGER PRIMARY KEY,
  run INTEGER NOT NULL,
  sample INTEGER NOT NULL,
  t REAL NOT NULL,
  wall_time TEXT NOT NULL,
  kind TEXT NOT NULL,
  rule TEXT,
  state TEXT,
  channel TEXT,
  incident TEXT,
  json TEXT NOT NULL            -- the event exactly as in events.jsonl
);
CREATE INDEX events_time ON events (run, sample);
CREATE INDEX events_incident ON events (incident);
CREATE TABLE incidents (
  id TEXT PRIMARY KEY,
  run INTEGER NOT NULL,
  channel TEXT NOT NULL,
  rules TEXT NOT NULL,          -- JSON array
  members TEXT NOT NULL,        -- JSON array of {rule, band?, frequency?, harmonic?}
  start_sample INTEGER NOT NULL, start_t REAL NOT NULL, start_wall TEXT NOT NULL,
  end_sample INTEGER, end_t REAL, end_wall TEXT,
  settled TEXT,                 -- JSON {levelDb, amplitude?, frequency?} or NULL
  peak TEXT NOT NULL,           -- JSON {levelDb, amplitude?, sample}
  acknowledged INTEGER NOT NULL DEFAULT 0,
  capture TEXT
);
CREATE INDEX incidents_start ON incidents (start_wall);
CREATE TABLE notes (
  id INTEGER PRIMARY KEY,
  run INTEGER,
  sample INTEGER,
  t REAL,
  wall_time TEXT NOT NULL,
  text TEXT NOT NULL,
  incident TEXT
);
CREATE TABLE unstored (
  run INTEGER NOT NULL,
  from_sample INTEGER NOT NULL,
  to_sample INTEGER NOT NULL,
  from_wall TEXT NOT NULL,
  to_wall TEXT NOT NULL,
  reason TEXT NOT NULL
);
`;

// Version 2: spectra kept every few seconds of sample time on a reduced log grid (dsp/log-grid.ts), for the
// waterfall after a page load and the timeline's "spectrum at this time". A rowid table: its 1 KiB rows fit three
// to a page, where a WITHOUT ROWID table would spill each into an overflow page (four times the size).
const VERSION_2 = `
CREATE TABLE spectra (
  id INTEGER PRIMARY KEY,
  run INTEGER NOT NULL REFERENCES runs(id),
  channel TEXT NOT NULL,
  sample INTEGER NOT NULL,      -- snapshot instant: the estimate holds the segments that end at or before it
  wall_ms REAL NOT NULL,        -- wall time of sample, ms since 1970 UTC
  unit TEXT NOT NULL,           -- channel unit; density is unit²/Hz
  f_low REAL NOT NULL,          -- Hz, first grid point (the first bin)
  f_high REAL NOT NULL,         -- Hz, last grid point (Nyquist)
  density BLOB NOT NULL         -- float32 little-endian, one per log-spaced grid point (length/4 points)
);
CREATE UNIQUE INDEX spectra_key ON spectra (run, channel, sample);
CREATE INDEX spectra_wall ON spectra (wall_ms);
`;

// Version 3: the run's health counters (the agent's own counts, which no event carries), read at each commit and
// kept as the latest reading of each minute of sample time, counted from the start of the run. A span's count is
// the difference of two readings, to the minute.
const VERSION_3 = `
CREATE TABLE health (
  run INTEGER NOT NULL REFERENCES runs(id),
  k INTEGER NOT NULL,               -- minute of the run's sample time: samples [k·L, (k+1)·L), L = level_samples.1m
  sample INTEGER NOT NULL,          -- newest sample delivered when the counters were read
  samples INTEGER NOT NULL,         -- sample instants delivered by the source since the run began
  gaps INTEGER NOT NULL,            -- gaps (runs of lost samples)
  lost_samples INTEGER NOT NULL,    -- samples lost in them
  crc_errors INTEGER NOT NULL,      -- frames from the board that failed their CRC
  sync_errors INTEGER NOT NULL,     -- bytes skipped to resync, malformed or rejected frames, bad text lines
  nonfinite_frames INTEGER NOT NULL,
  dropped_blocks INTEGER NOT NULL,  -- whole blocks dropped because analysis fell behind
  dropped_samples INTEGER NOT NULL,
  clipped_samples INTEGER NOT NULL, -- samples at full scale, all channels
  deleted_files INTEGER NOT NULL,   -- recordings and captures deleted by disk retention
  PRIMARY KEY (run, k)
) WITHOUT ROWID;
`;

/** MIGRATIONS[v]: SQL taking the schema from version v to v + 1 (v = 0: an empty file). */
export const MIGRATIONS: readonly string[] = [VERSION_1, VERSION_2, VERSION_3];
export const SCHEMA_VERSION = MIGRATIONS.length;
