import { hostname } from 'node:os';
import { randomBytes } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import type { AnalysisContext } from '@ebbgate/shared';
import {
  analyseTidalVolumeChallenge,
  analyseWindow,
  DEFAULT_SETTINGS,
  ENGINE_VERSION,
  type AnalysisInput,
  type AnalysisResult,
  type AnalysisSettings,
  type ChallengeInput,
  type TidalVolumeChallengeResult,
  ventilatorSettingChanges,
} from '@ebbgate/shared/analysis';
import type { AppContext, BackgroundService } from '../app-context';
import { PollLoop } from '../lib/poll-loop';
import { BedRow, MonitorProfileRow, MonitorRow } from '../devices/device.entities';
import { getSiteSettings } from '../settings/settings.service';
import { AnalysisWindowRow } from './analysis-window.entity';
import { storeAssessment } from './assessment-store';
import { challengeColumns, findChallenge } from './challenge-window';
import { assembleWindow, contextsOfMessages } from './window-assembly';
import { transactionWithRetry } from '../db/conflict-retry';

export interface Engine {
  version: string;
  analyse(input: AnalysisInput, settings?: Partial<AnalysisSettings>): AnalysisResult;
  /** Judges a whole tidal volume challenge; engines without it skip challenges. */
  analyseChallenge?(input: ChallengeInput, settings?: Partial<AnalysisSettings>): TidalVolumeChallengeResult;
}

export const DEFAULT_ENGINE: Engine = {
  version: ENGINE_VERSION,
  analyse: analyseWindow,
  analyseChallenge: (input, settings) => analyseTidalVolumeChallenge(input, settings).tidalVolumeChallenge,
};

/** Device facts from the profile that the engine needs as context; the batch's own context wins. */
function profileContext(profile: MonitorProfileRow | null): AnalysisContext {
  if (!profile) return {};
  const filtering = profile.channels
    .map((c) => c.builtInFiltering)
    .filter(Boolean)
    .join('; ');
  return {
    ...(profile.defaultProbeSite ? { probeSite: profile.defaultProbeSite as AnalysisContext['probeSite'] } : {}),
    plethScaling: profile.plethScaling,
    ...(filtering ? { builtInFiltering: filtering } : {}),
  };
}

export type ClaimOutcome = { windowId: string; status: 'done' | 'failed'; assessmentId: string | null } | null;

/**
 * Claims one due window of this engine version with SELECT … FOR UPDATE SKIP LOCKED, analyses
 * it and stores the assessment in the same transaction, so a window is analysed once even with
 * several gateway processes, and a crash mid-way leaves it due for the next worker.
 */
export async function analyseNextWindow(ctx: AppContext, engine: Engine, workerId: string): Promise<ClaimOutcome> {
  // Cycles averaged and decision bands are site settings an admin changes at run time.
  const site = (await getSiteSettings(ctx)).analysis;
  // Retried on a deadlock or a Galera certification failure (claims racing through two nodes).
  return transactionWithRetry(
    ctx.ds,
    async (m: EntityManager) => {
      const w = await m
        .getRepository(AnalysisWindowRow)
        .createQueryBuilder('w')
        .where("w.status = 'due'")
        .andWhere('w.engine_version = :v', { v: engine.version })
        .orderBy('w.id', 'ASC')
        .limit(1)
        .setLock('pessimistic_write')
        .setOnLocked('skip_locked')
        .getOne();
      if (!w) return null;
      const monitor = await m.findOneBy(MonitorRow, { id: w.monitorId });
      const profile = monitor?.profileId ? await m.findOneBy(MonitorProfileRow, { id: monitor.profileId }) : null;
      const { input, messageIds } = await assembleWindow(m, w.monitorId, w.windowStart, w.windowEnd);
      // The latest batch's context applies; a ventilator setting that changed between the
      // window's batches is flagged by the engine (no steady state).
      const contexts = await contextsOfMessages(m, messageIds);
      input.context = { ...profileContext(profile), ...(contexts.at(-1) ?? {}) };
      if (contexts.length > 1) input.settingChanges = ventilatorSettingChanges(contexts);
      // Checklist items a person set on the bed (audited) travel as their own context source.
      const bed = monitor?.bedId ? await m.findOneBy(BedRow, { id: monitor.bedId }) : null;
      if (bed?.checklist) input.bedContext = bed.checklist;
      const settings = { cyclesToAverage: site.cyclesToAverage, bands: site.bands };
      let result: AnalysisResult;
      try {
        result = engine.analyse(input, settings);
      } catch (err) {
        // Unreadable input (no data, unknown unit): the window is closed as failed with the reason.
        await m.update(
          AnalysisWindowRow,
          { id: w.id },
          { status: 'failed', attempts: w.attempts + 1, claimedBy: workerId, lastError: String((err as Error).message).slice(0, 2000), doneAt: new Date() },
        );
        ctx.logger.warn({ windowId: w.id, monitorId: w.monitorId, err: (err as Error).message }, 'analysis window failed');
        return { windowId: w.id, status: 'failed' as const, assessmentId: null };
      }
      // A tidal volume challenge this window completes is judged here and stored on its assessment.
      const found = engine.analyseChallenge
        ? await findChallenge(m, w.monitorId, w.windowEnd, DEFAULT_SETTINGS, { profile: profileContext(profile), bed: input.bedContext })
        : null;
      let challenge = challengeColumns(null, null);
      if (found && engine.analyseChallenge) {
        try {
          challenge = challengeColumns(found, engine.analyseChallenge(found.input, settings));
        } catch (err) {
          ctx.logger.warn({ windowId: w.id, monitorId: w.monitorId, err: (err as Error).message }, 'tidal volume challenge could not be read');
        }
      }
      const row = await storeAssessment(
        m,
        { monitorId: w.monitorId, bedId: monitor?.bedId ?? null, windowStart: w.windowStart, windowEnd: w.windowEnd },
        result,
        challenge,
      );
      await m.update(
        AnalysisWindowRow,
        { id: w.id },
        { status: 'done', attempts: w.attempts + 1, claimedBy: workerId, assessmentId: row.id, doneAt: new Date() },
      );
      return { windowId: w.id, status: 'done' as const, assessmentId: row.id };
    },
    { onRetry: (attempt, err) => ctx.logger.warn({ attempt, err: (err as Error).message }, 'analysis claim conflicted; retrying') },
  );
}

/** A window of an older engine still due after this long has no worker of its version left to take it. */
export const STRANDED_AFTER_MS = 2 * 60_000;
const ADOPT_EVERY_MS = 60_000;

/** Orders engine versions (major.minor.patch, numerically). */
export function compareVersions(a: string, b: string): number {
  const pa = a.split('.').map(Number);
  const pb = b.split('.').map(Number);
  for (let i = 0; i < Math.max(pa.length, pb.length); i++) {
    const d = (pa[i] || 0) - (pb[i] || 0);
    if (d !== 0) return d;
  }
  return 0;
}

/**
 * Windows planned by an older engine (before an upgrade) that no worker of that version took
 * within `STRANDED_AFTER_MS` are taken over by this version, so none stays unanalysed once every
 * gateway runs the new engine. During a rolling upgrade the old gateways keep theirs: only windows
 * left waiting that long move. Newer versions' windows (a reanalysis asked for by an upgraded
 * gateway) are never taken by an older engine. A window this version already has is left as it is
 * (UPDATE IGNORE on the unique monitor/start/version key). Returns the number taken over.
 */
export async function adoptStrandedWindows(ctx: AppContext, version: string, now = new Date()): Promise<number> {
  const before = new Date(now.getTime() - STRANDED_AFTER_MS);
  const versions = (
    (await ctx.ds.query(`SELECT DISTINCT engine_version AS v FROM analysis_window WHERE status = 'due' AND engine_version <> ? AND created_at < ?`, [
      version,
      before,
    ])) as { v: string }[]
  )
    .map((r) => r.v)
    .filter((v) => compareVersions(v, version) < 0);
  if (!versions.length) return 0;
  const res = (await ctx.ds.query(`UPDATE IGNORE analysis_window SET engine_version = ? WHERE status = 'due' AND engine_version IN (?) AND created_at < ?`, [
    version,
    versions,
    before,
  ])) as { affectedRows: number };
  if (res.affectedRows) ctx.logger.info({ from: versions, to: version, windows: res.affectedRows }, 'analysis windows of an older engine taken over');
  return res.affectedRows;
}

/** Background worker: drains due windows, then polls. Any number may run against one database. */
export class AnalysisWorker implements BackgroundService {
  readonly name = 'analysis-worker';
  readonly workerId = `${hostname()}:${process.pid}:${randomBytes(3).toString('hex')}`;
  analysed = 0;
  private readonly loop: PollLoop;
  private adoptedAt = 0;

  constructor(
    private readonly ctx: AppContext,
    private readonly engine: Engine = DEFAULT_ENGINE,
  ) {
    this.loop = new PollLoop(
      () => this.pass(),
      () => ctx.config.analysis.pollMs,
      (err) => ctx.logger.error({ err }, 'analysis worker error'),
    );
  }

  async start(): Promise<void> {
    this.loop.start();
  }

  async stop(): Promise<void> {
    await this.loop.stop();
  }

  /** Up to `windowsPerPoll` windows; true when the round was full, so more may be waiting. */
  private async pass(): Promise<boolean> {
    const { windowsPerPoll } = this.ctx.config.analysis;
    if (Date.now() - this.adoptedAt >= ADOPT_EVERY_MS) {
      this.adoptedAt = Date.now();
      await adoptStrandedWindows(this.ctx, this.engine.version);
    }
    let n = 0;
    while (this.loop.isRunning && n < windowsPerPoll && (await analyseNextWindow(this.ctx, this.engine, this.workerId))) {
      n++;
      this.analysed++;
    }
    return n >= windowsPerPoll;
  }
}

/**
 * Queues re-analysis of already analysed windows with `engineVersion` (a newer engine). The
 * earlier assessments stay; the new ones are added beside them.
 */
export async function requestReanalysis(
  ctx: AppContext,
  q: { engineVersion: string; monitorId?: string; from?: Date; to?: Date },
  m: EntityManager = ctx.ds.manager,
): Promise<number> {
  const where: string[] = ["status = 'done'", 'engine_version <> ?'];
  const params: unknown[] = [q.engineVersion, new Date(), q.engineVersion];
  const add = (clause: string, value: unknown) => {
    where.push(clause);
    params.push(value);
  };
  if (q.monitorId) add('monitor_id = ?', q.monitorId);
  if (q.from) add('window_start >= ?', q.from);
  if (q.to) add('window_start < ?', q.to);
  const res = (await m.query(
    `INSERT IGNORE INTO analysis_window (monitor_id, window_start, window_end, engine_version, status, attempts, created_at)
     SELECT DISTINCT monitor_id, window_start, window_end, ?, 'due', 0, ? FROM analysis_window WHERE ${where.join(' AND ')}`,
    params,
  )) as { affectedRows: number };
  return res.affectedRows;
}
