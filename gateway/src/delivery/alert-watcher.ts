/**
 * E-mail alerts to the on-call list: a destination down for N minutes, failures past a threshold
 * in a window, or a configuration error (401/403). One incident row per episode (a unique key
 * while open), one mail when it opens and one when it clears, even with several gateway processes.
 */
import type { SiteSettings } from '@ebbgate/shared';
import type { AppContext, BackgroundService } from '../app-context';
import { createMailer, type Mailer } from '../mail/mailer';
import { AlertIncidentRow, DestinationRow, type IncidentKind } from './delivery.entities';

interface Condition {
  kind: IncidentKind;
  active: boolean;
  detail: string;
}

export class AlertWatcher implements BackgroundService {
  readonly name = 'delivery-alerts';
  private timer: NodeJS.Timeout | undefined;
  private running: Promise<void> | undefined;
  private mailer: Mailer | undefined;

  constructor(
    private readonly ctx: AppContext,
    private readonly alertSettings: () => Promise<SiteSettings['alerts']>,
  ) {}

  async start(): Promise<void> {
    this.mailer = createMailer(this.ctx.config.mail);
    const tick = () => {
      this.running = this.check()
        .catch((err) => this.ctx.logger.error({ err }, 'alert check failed'))
        .finally(() => {
          if (this.mailer) this.timer = setTimeout(tick, this.ctx.config.delivery.alerts.checkIntervalMs);
        });
    };
    this.timer = setTimeout(tick, this.ctx.config.delivery.alerts.checkIntervalMs);
  }

  async stop(): Promise<void> {
    clearTimeout(this.timer);
    const m = this.mailer;
    this.mailer = undefined;
    await this.running;
    m?.close();
  }

  private consoleLink(destinationId: string): string {
    const base = (this.ctx.config.delivery.alerts.consoleUrl ?? this.ctx.config.gateway.publicUrl).replace(/\/$/, '');
    return `${base}/deliveries?destination=${encodeURIComponent(destinationId)}`;
  }

  /** One evaluation of every destination; exported for tests through the service. */
  async check(now = new Date()): Promise<void> {
    const settings = await this.alertSettings();
    const cfg = this.ctx.config.delivery.alerts;
    const destinations = await this.ctx.ds.getRepository(DestinationRow).find();
    const since = new Date(now.getTime() - cfg.failureWindowMinutes * 60_000);
    const failedRows = (await this.ctx.ds.query(`SELECT destination_id AS d, COUNT(*) AS c FROM delivery WHERE status = 'failed' AND updated_at >= ? GROUP BY destination_id`, [since])) as { d: string; c: string | number }[];
    for (const d of destinations) {
      const failed = Number(failedRows.find((r) => r.d === d.id)?.c ?? 0);
      const downForMs = d.downSince ? now.getTime() - d.downSince.getTime() : 0;
      const conditions: Condition[] = [
        {
          kind: 'down',
          active: !!d.downSince && downForMs >= settings.destinationDownMinutes * 60_000,
          detail: `${d.name} has not accepted a delivery since ${d.downSince?.toISOString() ?? '—'} (${d.consecutiveFailures} failed attempts in a row). Last error: ${d.lastError ?? 'none recorded'}.`,
        },
        {
          kind: 'failures',
          active: failed >= settings.failureThreshold,
          detail: `${failed} deliveries to ${d.name} failed in the last ${cfg.failureWindowMinutes} minutes (threshold ${settings.failureThreshold}). They wait in the failed messages list for retry, replay or discard.`,
        },
        { kind: 'configuration', active: !!d.configurationError, detail: `${d.name} refused Ebbgate's credentials: ${d.configurationError ?? ''}` },
      ];
      for (const c of conditions) await (c.active ? this.open(d, c, now) : this.clear(d, c.kind, now));
    }
    await this.sendPendingMail(settings.recipients);
  }

  private async open(d: DestinationRow, c: Condition, now: Date): Promise<void> {
    await this.ctx.ds.query(
      `INSERT IGNORE INTO alert_incident (destination_id, kind, open_key, opened_at, detail) VALUES (?, ?, ?, ?, ?)`,
      [d.id, c.kind, `${d.id}:${c.kind}`, now, c.detail],
    );
  }

  private async clear(d: DestinationRow, kind: IncidentKind, now: Date): Promise<void> {
    await this.ctx.ds.query(`UPDATE alert_incident SET cleared_at = ?, open_key = NULL WHERE open_key = ?`, [now, `${d.id}:${kind}`]);
  }

  /** Claims each unsent mail with a conditional update, so only one process sends it. */
  private async sendPendingMail(recipients: string[]): Promise<void> {
    if (!this.mailer || recipients.length === 0) return;
    const repo = this.ctx.ds.getRepository(AlertIncidentRow);
    const due = await repo
      .createQueryBuilder('i')
      .where('i.opened_mail_at IS NULL OR (i.cleared_at IS NOT NULL AND i.cleared_mail_at IS NULL)')
      .orderBy('i.id', 'ASC')
      .getMany();
    const names = new Map((await this.ctx.ds.getRepository(DestinationRow).find()).map((d) => [d.id, d.name]));
    for (const i of due) {
      const column = i.openedMailAt === null ? 'opened_mail_at' : 'cleared_mail_at';
      const claimed = (await this.ctx.ds.query(`UPDATE alert_incident SET ${column} = ? WHERE id = ? AND ${column} IS NULL`, [new Date(), i.id])) as { affectedRows?: number };
      if (!claimed.affectedRows) continue;
      const name = names.get(i.destinationId) ?? i.destinationId;
      const what = { down: 'is down', failures: 'has failed deliveries past the threshold', configuration: 'rejects the configured credentials' }[i.kind];
      const opening = column === 'opened_mail_at';
      const subject = opening ? `[Ebbgate] ${name} ${what}` : `[Ebbgate] Cleared: ${name} ${what.replace(/^is /, 'was ').replace(/^has /, 'had ').replace(/^rejects/, 'rejected')}`;
      const text = [
        opening ? `Incident #${i.id} opened at ${i.openedAt.toISOString()}.` : `Incident #${i.id} (opened ${i.openedAt.toISOString()}) cleared at ${i.clearedAt?.toISOString()}.`,
        '',
        i.detail,
        '',
        `Open the console: ${this.consoleLink(i.destinationId)}`,
        '',
        'Results are kept in the outbox and are delivered when the destination answers again; nothing is lost.',
        'This mail is sent once when an incident opens and once when it clears.',
      ].join('\n');
      try {
        await this.mailer.send({ to: recipients, subject, text });
        this.ctx.logger.warn({ incident: i.id, kind: i.kind, destination: i.destinationId, opening }, 'alert mail sent');
      } catch (err) {
        // Not sent: release the claim so the next check tries again.
        await this.ctx.ds.query(`UPDATE alert_incident SET ${column} = NULL WHERE id = ?`, [i.id]);
        this.ctx.logger.error({ err, incident: i.id }, 'alert mail failed');
      }
    }
  }
}
