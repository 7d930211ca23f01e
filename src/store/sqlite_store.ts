import { DatabaseSync, type SQLInputValue } from "node:sqlite";
import {
  type AbandonedAs,
  type ClaimedJob,
  type JobError,
  type JobOutcome,
  type JobProgress,
  type JobRecord,
  type JobSummary,
  type NewJob,
  type ScenarioHead,
  type ScenarioRevision,
  type Store,
  StoreBusyError,
  type WorkerRecord,
} from "./store.ts";

/**
 * Versioned schema: migration n (1-based) turns schema n−1 into n. Append only;
 * never edit a migration that has shipped.
 */
export const MIGRATIONS: readonly string[] = [
  `CREATE TABLE scenarios (
     id TEXT PRIMARY KEY,
     name TEXT NOT NULL,
     revision INTEGER NOT NULL,
     created_at TEXT NOT NULL,
     updated_at TEXT NOT NULL
   );
   CREATE TABLE scenario_revisions (
     scenario_id TEXT NOT NULL REFERENCES scenarios(id) ON DELETE CASCADE,
     revision INTEGER NOT NULL,
     name TEXT NOT NULL,
     body TEXT NOT NULL,
     created_at TEXT NOT NULL,
     PRIMARY KEY (scenario_id, revision)
   );
   CREATE TABLE jobs (
     seq INTEGER PRIMARY KEY AUTOINCREMENT,
     id TEXT NOT NULL UNIQUE,
     kind TEXT NOT NULL,
     name TEXT NOT NULL,
     status TEXT NOT NULL CHECK (status IN ('queued','running','done','failed','cancelled')),
     input TEXT NOT NULL,
     attempts INTEGER NOT NULL DEFAULT 0,
     max_attempts INTEGER NOT NULL DEFAULT 3,
     time_limit_ms INTEGER NOT NULL,
     created_at TEXT NOT NULL,
     started_at TEXT,
     finished_at TEXT,
     lease_owner TEXT,
     lease_expires_ms INTEGER,
     cancel_requested INTEGER NOT NULL DEFAULT 0,
     progress TEXT,
     progress_seq INTEGER NOT NULL DEFAULT 0,
     result TEXT,
     error TEXT
   );
   CREATE INDEX jobs_status ON jobs(status, seq);`,
  `CREATE TABLE workers (
     id TEXT PRIMARY KEY,
     pid INTEGER NOT NULL,
     started_at TEXT NOT NULL,
     heartbeat_ms INTEGER NOT NULL
   );`,
];

/** Options of {@link SqliteStore.open}. */
export interface SqliteStoreOptions {
  /**
   * How long a statement waits for another process's lock, ms (default 5000),
   * before the method throws {@link StoreBusyError}. The wait is synchronous:
   * the service, which must keep answering, uses a short one and retries
   * asynchronously. Opening (and migrating) always waits up to 5000 ms.
   */
  busyTimeoutMs?: number;
}

const SQLITE_BUSY = 5;
const SQLITE_LOCKED = 6;

/** True for SQLite's "database is locked" (SQLITE_BUSY / SQLITE_LOCKED and their extended codes). */
function isBusy(error: unknown): boolean {
  if (!(error instanceof Error)) return false;
  const code = (error as { errcode?: unknown }).errcode;
  if (typeof code === "number") {
    return (code & 0xff) === SQLITE_BUSY || (code & 0xff) === SQLITE_LOCKED;
  }
  // exec() errors carry no errcode, only SQLite's message.
  return /^database (table )?is locked|^database is busy/.test(error.message);
}

type Row = Record<string, SQLInputValue>;

const nowIso = () => new Date().toISOString();
const json = (v: unknown) => (v === undefined ? null : JSON.stringify(v));
const parse = (v: unknown) => (typeof v === "string" ? JSON.parse(v) : null);

const SUMMARY_COLUMNS = `id, kind, name, status, attempts, max_attempts, time_limit_ms, created_at,
  started_at, finished_at, lease_owner, lease_expires_ms, cancel_requested, progress, progress_seq,
  error`;

function toSummary(row: Row): JobSummary {
  return {
    id: String(row.id),
    kind: row.kind as JobRecord["kind"],
    name: String(row.name),
    status: row.status as JobRecord["status"],
    attempts: Number(row.attempts),
    max_attempts: Number(row.max_attempts),
    time_limit_ms: Number(row.time_limit_ms),
    created_at: String(row.created_at),
    started_at: (row.started_at as string | null) ?? null,
    finished_at: (row.finished_at as string | null) ?? null,
    lease_owner: (row.lease_owner as string | null) ?? null,
    lease_expires_ms: row.lease_expires_ms === null ? null : Number(row.lease_expires_ms),
    cancel_requested: Number(row.cancel_requested) === 1,
    progress: parse(row.progress),
    progress_seq: Number(row.progress_seq),
    error: parse(row.error),
  };
}

function toRecord(row: Row): JobRecord {
  return { ...toSummary(row), input: parse(row.input), result: parse(row.result) };
}

/**
 * The store on one SQLite file (`node:sqlite`), shared by the service and any
 * number of worker processes: WAL journal, a busy timeout set before switching
 * to WAL (the other order fails with "database is locked" under contention),
 * and `BEGIN IMMEDIATE` around every read-modify-write.
 */
export class SqliteStore implements Store {
  readonly path: string;
  #db: DatabaseSync;

  private constructor(path: string, db: DatabaseSync) {
    this.path = path;
    this.#db = db;
  }

  /** Open (creating if needed) the database file and bring its schema up to date. */
  static open(path: string, options: SqliteStoreOptions = {}): SqliteStore {
    // The database's folder is made if missing (a fresh checkout has no data/).
    const slash = path.lastIndexOf("/");
    if (slash > 0) Deno.mkdirSync(path.slice(0, slash), { recursive: true });
    const db = new DatabaseSync(path);
    const store = new SqliteStore(path, db);
    try {
      store.#safe(() => {
        db.exec("PRAGMA busy_timeout = 5000");
        db.exec("PRAGMA journal_mode = WAL");
        db.exec("PRAGMA synchronous = NORMAL");
        db.exec("PRAGMA foreign_keys = ON");
        store.#migrate();
      });
      db.exec(`PRAGMA busy_timeout = ${Math.max(0, Math.trunc(options.busyTimeoutMs ?? 5000))}`);
    } catch (error) {
      db.close();
      throw error;
    }
    return store;
  }

  /** The schema version the file is at. */
  schemaVersion(): number {
    const row = this.#db.prepare("SELECT max(version) AS v FROM schema_migrations").get() as Row;
    return Number(row.v ?? 0);
  }

  #migrate(): void {
    this.#transaction(() => {
      this.#db.exec(
        "CREATE TABLE IF NOT EXISTS schema_migrations (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL)",
      );
      const current = this.schemaVersion();
      if (current > MIGRATIONS.length) {
        throw new RangeError(
          `Cannot open ${this.path}: its schema version ${current} is newer than this program's ${MIGRATIONS.length}`,
        );
      }
      for (let v = current + 1; v <= MIGRATIONS.length; v++) {
        this.#db.exec(MIGRATIONS[v - 1]);
        this.#db.prepare("INSERT INTO schema_migrations (version, applied_at) VALUES (?, ?)")
          .run(v, nowIso());
      }
    });
  }

  #transaction<T>(body: () => T): T {
    this.#db.exec("BEGIN IMMEDIATE");
    try {
      const value = body();
      this.#db.exec("COMMIT");
      return value;
    } catch (error) {
      if (this.#db.isTransaction) this.#db.exec("ROLLBACK");
      throw error;
    }
  }

  /** Run `body`, turning SQLite's "database is locked" into {@link StoreBusyError}. */
  #safe<T>(body: () => T): T {
    try {
      return body();
    } catch (error) {
      if (!isBusy(error)) throw error;
      throw new StoreBusyError(
        `The database ${this.path} is locked by another process; nothing was changed, try again shortly`,
        { cause: error },
      );
    }
  }

  /**
   * The retry rule (see {@link AbandonedAs}) on every running attempt matching
   * `where`: queued again while attempts remain, else failed with `error`;
   * cancelled when a cancel was requested.
   */
  #abandon(
    where: string,
    params: SQLInputValue[],
    error: JobError,
    cancelMessage: string,
  ): AbandonedAs[] {
    const rows = this.#db.prepare(
      `UPDATE jobs SET
         status = CASE WHEN cancel_requested = 1 THEN 'cancelled'
                       WHEN attempts < max_attempts THEN 'queued' ELSE 'failed' END,
         finished_at = CASE WHEN cancel_requested = 0 AND attempts < max_attempts THEN NULL
                            ELSE ? END,
         started_at = CASE WHEN cancel_requested = 0 AND attempts < max_attempts THEN NULL
                           ELSE started_at END,
         progress = CASE WHEN cancel_requested = 0 AND attempts < max_attempts THEN NULL
                         ELSE progress END,
         error = CASE WHEN cancel_requested = 1 THEN json_object('code', 'cancelled', 'message', ?)
                      WHEN attempts < max_attempts THEN NULL
                      ELSE json_object('code', ?, 'message',
                             ? || ' (attempt ' || attempts || ' of ' || max_attempts || ')') END,
         lease_owner = NULL, lease_expires_ms = NULL
       WHERE status = 'running' AND ${where}
       RETURNING status`,
    ).all(nowIso(), cancelMessage, error.code, error.message, ...params) as Row[];
    return rows.map((r) => r.status as AbandonedAs);
  }

  close(): void {
    if (this.#db.isOpen) this.#db.close();
  }

  // Scenarios

  listScenarios(): ScenarioHead[] {
    return this.#safe(() => {
      return this.#db.prepare(
        "SELECT id, name, revision, created_at, updated_at FROM scenarios ORDER BY updated_at DESC, id",
      ).all() as unknown as ScenarioHead[];
    });
  }

  createScenario(id: string, name: string, scenario: unknown): ScenarioHead {
    return this.#safe(() => {
      const now = nowIso();
      return this.#transaction(() => {
        this.#db.prepare(
          "INSERT INTO scenarios (id, name, revision, created_at, updated_at) VALUES (?, ?, 1, ?, ?)",
        ).run(id, name, now, now);
        this.#db.prepare(
          "INSERT INTO scenario_revisions (scenario_id, revision, name, body, created_at) VALUES (?, 1, ?, ?, ?)",
        ).run(id, name, JSON.stringify(scenario), now);
        return { id, name, revision: 1, created_at: now, updated_at: now };
      });
    });
  }

  updateScenario(id: string, name: string, scenario: unknown): ScenarioHead | undefined {
    return this.#safe(() => {
      const now = nowIso();
      return this.#transaction(() => {
        const head = this.#db.prepare(
          "UPDATE scenarios SET name = ?, revision = revision + 1, updated_at = ? WHERE id = ? RETURNING id, name, revision, created_at, updated_at",
        ).get(name, now, id) as ScenarioHead | undefined;
        if (!head) return undefined;
        this.#db.prepare(
          "INSERT INTO scenario_revisions (scenario_id, revision, name, body, created_at) VALUES (?, ?, ?, ?, ?)",
        ).run(id, head.revision, name, JSON.stringify(scenario), now);
        return { ...head };
      });
    });
  }

  getScenario(id: string): (ScenarioHead & { scenario: unknown }) | undefined {
    return this.#safe(() => {
      const row = this.#db.prepare(
        `SELECT s.id, s.name, s.revision, s.created_at, s.updated_at, r.body FROM scenarios s
         JOIN scenario_revisions r ON r.scenario_id = s.id AND r.revision = s.revision WHERE s.id = ?`,
      ).get(id) as Row | undefined;
      if (!row) return undefined;
      return {
        id: String(row.id),
        name: String(row.name),
        revision: Number(row.revision),
        created_at: String(row.created_at),
        updated_at: String(row.updated_at),
        scenario: parse(row.body),
      };
    });
  }

  listRevisions(id: string): Omit<ScenarioRevision, "scenario" | "id">[] | undefined {
    return this.#safe(() => {
      const exists = this.#db.prepare("SELECT 1 FROM scenarios WHERE id = ?").get(id);
      if (!exists) return undefined;
      return this.#db.prepare(
        "SELECT revision, name, created_at FROM scenario_revisions WHERE scenario_id = ? ORDER BY revision",
      ).all(id).map((r) => ({
        revision: Number(r.revision),
        name: String(r.name),
        created_at: String(r.created_at),
      }));
    });
  }

  getRevision(id: string, revision: number): ScenarioRevision | undefined {
    return this.#safe(() => {
      const row = this.#db.prepare(
        "SELECT revision, name, body, created_at FROM scenario_revisions WHERE scenario_id = ? AND revision = ?",
      ).get(id, revision) as Row | undefined;
      if (!row) return undefined;
      return {
        id,
        revision: Number(row.revision),
        name: String(row.name),
        created_at: String(row.created_at),
        scenario: parse(row.body),
      };
    });
  }

  deleteScenario(id: string): boolean {
    return this.#safe(() => {
      // Its revisions go with it (ON DELETE CASCADE, foreign keys on).
      return Number(this.#db.prepare("DELETE FROM scenarios WHERE id = ?").run(id).changes) > 0;
    });
  }

  // Jobs

  submitJob(job: NewJob, options: { maxQueued: number }): JobRecord | false {
    return this.#safe(() => {
      return this.#transaction(() => {
        const queued = this.#db.prepare("SELECT count(*) AS n FROM jobs WHERE status = 'queued'")
          .get() as Row;
        if (Number(queued.n) >= options.maxQueued) return false;
        const row = this.#db.prepare(
          `INSERT INTO jobs (id, kind, name, status, input, max_attempts, time_limit_ms, created_at)
           VALUES (?, ?, ?, 'queued', ?, ?, ?, ?) RETURNING *`,
        ).get(
          job.id,
          job.kind,
          job.name,
          JSON.stringify(job.input),
          job.max_attempts ?? 3,
          Math.trunc(job.time_limit_ms),
          nowIso(),
        ) as Row;
        return toRecord(row);
      });
    });
  }

  getJob(id: string): JobRecord | undefined {
    return this.#safe(() => {
      const row = this.#db.prepare("SELECT * FROM jobs WHERE id = ?").get(id) as Row | undefined;
      return row ? toRecord(row) : undefined;
    });
  }

  getJobSummary(id: string): JobSummary | undefined {
    return this.#safe(() => {
      const row = this.#db.prepare(`SELECT ${SUMMARY_COLUMNS} FROM jobs WHERE id = ?`).get(id) as
        | Row
        | undefined;
      return row ? toSummary(row) : undefined;
    });
  }

  listJobs(options: { limit?: number } = {}): JobSummary[] {
    return this.#safe(() => {
      return this.#db.prepare(`SELECT ${SUMMARY_COLUMNS} FROM jobs ORDER BY seq DESC LIMIT ?`)
        .all(Math.trunc(options.limit ?? 200)).map((r) => toSummary(r as Row));
    });
  }

  countJobs(): { queued: number; running: number } {
    return this.#safe(() => {
      const rows = this.#db.prepare(
        "SELECT status, count(*) AS n FROM jobs WHERE status IN ('queued', 'running') GROUP BY status",
      ).all() as Row[];
      const counts = { queued: 0, running: 0 };
      for (const r of rows) counts[r.status as "queued" | "running"] = Number(r.n);
      return counts;
    });
  }

  claimJob(owner: string, leaseMs: number, nowMs = Date.now()): ClaimedJob | undefined {
    return this.#safe(() =>
      this.#transaction(() => {
        // Lapsed leases: the worker died. The retry rule settles them first.
        this.#abandon("lease_expires_ms < ?", [nowMs], {
          code: "worker_lost",
          message: "the worker running this job stopped responding",
        }, "cancelled by request (its worker had stopped)");
        const row = this.#db.prepare(
          `UPDATE jobs SET status = 'running', lease_owner = ?, lease_expires_ms = ?,
             attempts = attempts + 1, started_at = ?, progress = NULL
           WHERE seq = (SELECT seq FROM jobs WHERE status = 'queued' ORDER BY seq LIMIT 1)
           RETURNING *`,
        ).get(owner, nowMs + leaseMs, nowIso()) as Row | undefined;
        if (!row) return undefined;
        const job = toRecord(row);
        return { job, attempt: job.attempts };
      })
    );
  }

  renewLease(id: string, owner: string, attempt: number, leaseMs: number): boolean {
    return this.#safe(() => {
      return Number(
        this.#db.prepare(
          `UPDATE jobs SET lease_expires_ms = ?
           WHERE id = ? AND status = 'running' AND lease_owner = ? AND attempts = ?`,
        ).run(Date.now() + leaseMs, id, owner, attempt).changes,
      ) > 0;
    });
  }

  writeProgress(id: string, owner: string, attempt: number, progress: JobProgress): boolean {
    return this.#safe(() => {
      return Number(
        this.#db.prepare(
          `UPDATE jobs SET progress = ?, progress_seq = progress_seq + 1
           WHERE id = ? AND status = 'running' AND lease_owner = ? AND attempts = ?`,
        ).run(JSON.stringify(progress), id, owner, attempt).changes,
      ) > 0;
    });
  }

  finishJob(id: string, owner: string, attempt: number, outcome: JobOutcome): boolean {
    return this.#safe(() => {
      const error = "error" in outcome ? outcome.error : undefined;
      const result = "result" in outcome ? outcome.result : undefined;
      return Number(
        this.#db.prepare(
          `UPDATE jobs SET status = ?, finished_at = ?, lease_owner = NULL, lease_expires_ms = NULL,
             result = ?, error = ?
           WHERE id = ? AND status = 'running' AND lease_owner = ? AND attempts = ?`,
        ).run(outcome.status, nowIso(), json(result), json(error), id, owner, attempt).changes,
      ) > 0;
    });
  }

  abandonAttempt(
    id: string,
    owner: string,
    attempt: number,
    error: JobError,
  ): AbandonedAs | undefined {
    return this.#safe(() =>
      this.#abandon(
        "id = ? AND lease_owner = ? AND attempts = ?",
        [id, owner, attempt],
        error,
        "cancelled by request (its job process had stopped)",
      )[0]
    );
  }

  releaseJob(id: string, owner: string, attempt: number): boolean {
    return this.#safe(() => {
      return Number(
        this.#db.prepare(
          `UPDATE jobs SET status = 'queued', lease_owner = NULL, lease_expires_ms = NULL,
             attempts = attempts - 1, started_at = NULL, progress = NULL
           WHERE id = ? AND status = 'running' AND lease_owner = ? AND attempts = ?`,
        ).run(id, owner, attempt).changes,
      ) > 0;
    });
  }

  requestCancel(id: string): JobRecord | undefined {
    return this.#safe(() => {
      return this.#transaction(() => {
        const now = nowIso();
        this.#db.prepare(
          `UPDATE jobs SET status = 'cancelled', cancel_requested = 1, finished_at = ?, error = ?
           WHERE id = ? AND status = 'queued'`,
        ).run(now, json({ code: "cancelled", message: "cancelled before it started" }), id);
        this.#db.prepare(
          "UPDATE jobs SET cancel_requested = 1 WHERE id = ? AND status = 'running'",
        ).run(id);
        return this.getJob(id);
      });
    });
  }

  isCancelRequested(id: string): boolean {
    return this.#safe(() => {
      const row = this.#db.prepare("SELECT cancel_requested FROM jobs WHERE id = ?").get(id) as
        | Row
        | undefined;
      return row !== undefined && Number(row.cancel_requested) === 1;
    });
  }

  // Workers

  heartbeatWorker(id: string, pid: number): void {
    return this.#safe(() => {
      this.#db.prepare(
        `INSERT INTO workers (id, pid, started_at, heartbeat_ms) VALUES (?, ?, ?, ?)
         ON CONFLICT (id) DO UPDATE SET heartbeat_ms = excluded.heartbeat_ms`,
      ).run(id, pid, nowIso(), Date.now());
    });
  }

  removeWorker(id: string): void {
    return this.#safe(() => {
      this.#db.prepare("DELETE FROM workers WHERE id = ?").run(id);
    });
  }

  aliveWorkers(withinMs: number): WorkerRecord[] {
    return this.#safe(() => {
      return this.#db.prepare(
        "SELECT id, pid, started_at, heartbeat_ms FROM workers WHERE heartbeat_ms >= ? ORDER BY started_at",
      ).all(Date.now() - withinMs).map((r) => ({
        id: String(r.id),
        pid: Number(r.pid),
        started_at: String(r.started_at),
        heartbeat_ms: Number(r.heartbeat_ms),
      }));
    });
  }
}
