/**
 * E-mail alerts to the on-call list: a destination down for N minutes, failures past a threshold
 * in a window, a configuration error (401/403), or an entered-in-error amendment that could not be
 * delivered (the withdrawn value may still stand in the chart), or a second stream claiming a
 * monitor at the device edge (a spoofing attempt or a misrouted adapter; the incident's source is
 * EDGE_SOURCE instead of a destination). One incident row per episode (a
 * unique key while open); its mails go through their own outbox (alert_mail: one row per incident
 * and event, claimed with a lease and a fencing token, sent, then marked), so a process that dies
 * between claiming and sending leaves the mail due again: at-least-once, with a stable Message-ID.
 */
import { randomUUID } from 'node:crypto';
import type { SiteSettings } from '@ebbgate/shared';
import { In } from 'typeorm';
import type { AppContext, BackgroundService } from '../app-context';
import { createMailer, messageIdDomain, type Mailer } from '../mail/mailer';
import { AlertIncidentRow, AlertMailRow, DestinationRow, type IncidentKind } from './delivery.entities';

interface Condition {
  kind: IncidentKind;
  active: boolean;
  detail: string;
}

/** The console screen the mail sends people to (admin-ui routes: Deliver → Deliveries, /deliveries). */
export const CONSOLE_SCREEN = { name: 'Deliveries', path: '/deliveries' } as const;
/** Where refused second streams are listed (admin-ui routes: Deliver → Inbound & quarantine). */
export const EDGE_SCREEN = { name: 'Inbound & quarantine', path: '/inbound?outcome=conflicting' } as const;

/** The incident source for device-edge conditions (alert_incident.destination_id holds it). */
export const EDGE_SOURCE = { id: 'device-edge', name: 'Device edge' } as const;

/** How long a claimed mail is left to its sender before another process may send it. */
const MAIL_LEASE_MS = 60_000;

export class AlertWatcher implements BackgroundService {
  readonly name = 'delivery-alerts';
  private timer: NodeJS.Timeout | undefined;
  private running: Promise<void> | undefined;
  private mailer: Mailer | undefined;

  constructor(
    private readonly ctx: AppContext,
    private readonly alertSettings: () => Promise<SiteSettings['alerts']>,
    /** Tests replace the mailer (e.g. one that dies after the claim). */
    private readonly makeMailer: () => Mailer = () => createMailer(ctx.config.mail),
  ) {}

  async start(): Promise<void> {
    this.mailer = this.makeMailer();
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

  consoleLink(path: string = CONSOLE_SCREEN.path): string {
    const base = (this.ctx.config.delivery.alerts.consoleUrl ?? this.ctx.config.gateway.publicUrl).replace(/\/$/, '');
    return `${base}${path}`;
  }

  /** One evaluation of every destination; exported for tests through the service. */
  async check(now = new Date()): Promise<void> {
    const settings = await this.alertSettings();
    const cfg = this.ctx.config.delivery.alerts;
    const destinations = await this.ctx.ds.getRepository(DestinationRow).find();
    const since = new Date(now.getTime() - cfg.failureWindowMinutes * 60_000);
    const failedRows = (await this.ctx.ds.query(
      `SELECT destination_id AS d, COUNT(*) AS c FROM delivery WHERE status = 'failed' AND updated_at >= ? GROUP BY destination_id`,
      [since],
    )) as { d: string; c: string | number }[];
    const failedAmends = (await this.ctx.ds.query(
      `SELECT destination_id AS d, COUNT(*) AS c FROM delivery WHERE status = 'failed' AND kind = 'amend' GROUP BY destination_id`,
    )) as { d: string; c: string | number }[];
    for (const d of destinations) {
      const failed = Number(failedRows.find((r) => r.d === d.id)?.c ?? 0);
      const amends = Number(failedAmends.find((r) => r.d === d.id)?.c ?? 0);
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
          detail: `${failed} deliveries to ${d.name} failed in the last ${cfg.failureWindowMinutes} minutes (threshold ${settings.failureThreshold}). They wait on the ${CONSOLE_SCREEN.name} screen (status Failed) for retry, replay or discard.`,
        },
        { kind: 'configuration', active: !!d.configurationError, detail: `${d.name} refused Ebbgate's credentials: ${d.configurationError ?? ''}` },
        {
          kind: 'amendment',
          active: amends > 0,
          detail: `${amends} entered-in-error ${amends === 1 ? 'amendment' : 'amendments'} to ${d.name} failed: a value reviewers withdrew may still stand in the chart. See the ${CONSOLE_SCREEN.name} screen (kind Amend, status Failed) for the reason; correct it at the EHR by hand or retry once the original can be found.`,
        },
      ];
      for (const c of conditions) await (c.active ? this.open(d.id, c, now) : this.clear(d.id, c.kind, now));
    }
    const conflicting = Number(
      (
        (await this.ctx.ds.query(`SELECT COUNT(*) AS c FROM inbound_message WHERE outcome = 'conflicting' AND received_at >= ?`, [since])) as {
          c: string | number;
        }[]
      )[0]?.c ?? 0,
    );
    const edge: Condition = {
      kind: 'conflicting',
      active: conflicting > 0,
      detail: `${conflicting} ${conflicting === 1 ? 'message' : 'messages'} in the last ${cfg.failureWindowMinutes} minutes came from a second sender claiming a monitor that another sender was already streaming for the same time. They were refused and kept, not merged: see the Inbound & quarantine screen (outcome conflicting) for the sender, its address and the monitor, and check the adapters.`,
    };
    await (edge.active ? this.open(EDGE_SOURCE.id, edge, now) : this.clear(EDGE_SOURCE.id, edge.kind, now));
    await this.queueMail(settings.recipients, now);
    await this.sendDueMail(settings.recipients);
  }

  private async open(sourceId: string, c: Condition, now: Date): Promise<void> {
    await this.ctx.ds.query(`INSERT IGNORE INTO alert_incident (destination_id, kind, open_key, opened_at, detail) VALUES (?, ?, ?, ?, ?)`, [
      sourceId,
      c.kind,
      `${sourceId}:${c.kind}`,
      now,
      c.detail,
    ]);
  }

  private async clear(sourceId: string, kind: IncidentKind, now: Date): Promise<void> {
    await this.ctx.ds.query(`UPDATE alert_incident SET cleared_at = ?, open_key = NULL WHERE open_key = ?`, [now, `${sourceId}:${kind}`]);
  }

  private messageId(incidentId: string, event: string): string {
    return `<ebbgate-incident-${incidentId}-${event}@${messageIdDomain(this.ctx.config.mail.from)}>`;
  }

  /** One alert_mail row per incident and event (the unique key makes it one across processes). */
  private async queueMail(recipients: string[], now: Date): Promise<void> {
    if (recipients.length === 0) return;
    await this.ctx.ds.transaction(async (m) => {
      const opened = (await m.query(`SELECT id FROM alert_incident WHERE opened_mail_at IS NULL FOR UPDATE`)) as { id: string | number }[];
      const cleared = (await m.query(`SELECT id FROM alert_incident WHERE cleared_at IS NOT NULL AND cleared_mail_at IS NULL FOR UPDATE`)) as {
        id: string | number;
      }[];
      for (const [rows, event, column] of [
        [opened, 'opened', 'opened_mail_at'],
        [cleared, 'cleared', 'cleared_mail_at'],
      ] as const) {
        for (const r of rows) {
          await m.query(`INSERT IGNORE INTO alert_mail (incident_id, event, message_id, status, tries, created_at) VALUES (?, ?, ?, 'pending', 0, ?)`, [
            r.id,
            event,
            this.messageId(String(r.id), event),
            now,
          ]);
          await m.query(`UPDATE alert_incident SET ${column} = ? WHERE id = ?`, [now, r.id]);
        }
      }
    });
  }

  /** Claims due mail (lease + fencing token), sends it, marks it sent only if the claim still holds. */
  private async sendDueMail(recipients: string[]): Promise<void> {
    if (!this.mailer || recipients.length === 0) return;
    const claimId = randomUUID();
    const now = new Date();
    await this.ctx.ds.query(
      `UPDATE alert_mail SET claim_id = ?, claimed_until = ?, tries = tries + 1 WHERE status = 'pending' AND (claimed_until IS NULL OR claimed_until <= ?) ORDER BY id LIMIT 20`,
      [claimId, new Date(now.getTime() + MAIL_LEASE_MS), now],
    );
    const due = await this.ctx.ds.getRepository(AlertMailRow).find({ where: { claimId, status: 'pending' }, order: { id: 'ASC' } });
    if (!due.length) return;
    const incidents = new Map(
      (await this.ctx.ds.getRepository(AlertIncidentRow).findBy({ id: In(due.map((d) => d.incidentId)) })).map((i) => [String(i.id), i]),
    );
    const names = new Map<string, string>([
      [EDGE_SOURCE.id, EDGE_SOURCE.name],
      ...(await this.ctx.ds.getRepository(DestinationRow).find()).map((d) => [d.id, d.name] as [string, string]),
    ]);
    for (const mail of due) {
      const i = incidents.get(String(mail.incidentId));
      if (!i) continue;
      const { subject, text } = this.compose(i, mail.event === 'opened', names.get(i.destinationId) ?? i.destinationId);
      try {
        await this.mailer.send({ to: recipients, subject, text, messageId: mail.messageId });
        const marked = (await this.ctx.ds.query(`UPDATE alert_mail SET status = 'sent', sent_at = ?, last_error = NULL WHERE id = ? AND claim_id = ?`, [
          new Date(),
          mail.id,
          claimId,
        ])) as { affectedRows?: number };
        this.ctx.logger.warn(
          { incident: i.id, kind: i.kind, destination: i.destinationId, event: mail.event, messageId: mail.messageId, marked: !!marked.affectedRows },
          'alert mail sent',
        );
      } catch (err) {
        // Not sent: due again after a short pause (the claim is released; tries counts the attempts).
        await this.ctx.ds.query(`UPDATE alert_mail SET claim_id = NULL, claimed_until = ?, last_error = ? WHERE id = ? AND claim_id = ?`, [
          new Date(Date.now() + Math.min(60_000, 1000 * 2 ** Math.min(mail.tries, 6))),
          String((err as Error)?.message ?? err).slice(0, 2000),
          mail.id,
          claimId,
        ]);
        this.ctx.logger.error({ err, incident: i.id }, 'alert mail failed');
      }
    }
  }

  compose(i: AlertIncidentRow, opening: boolean, name: string): { subject: string; text: string } {
    const what = {
      down: 'is down',
      failures: 'has failed deliveries past the threshold',
      configuration: 'rejects the configured credentials',
      amendment: 'has an entered-in-error amendment that failed',
      conflicting: 'refused a second stream claiming a monitor',
    }[i.kind];
    const subject = opening
      ? `[Ebbgate] ${name} ${what}`
      : `[Ebbgate] Cleared: ${name} ${what
          .replace(/^is /, 'was ')
          .replace(/^has /, 'had ')
          .replace(/^rejects/, 'rejected')}`;
    const text = [
      opening
        ? `Incident #${i.id} opened at ${i.openedAt.toISOString()}.`
        : `Incident #${i.id} (opened ${i.openedAt.toISOString()}) cleared at ${i.clearedAt?.toISOString()}.`,
      '',
      i.detail,
      '',
      i.kind === 'conflicting'
        ? `Open the ${EDGE_SCREEN.name} screen of the Ebbgate console (Deliver → ${EDGE_SCREEN.name}), outcome conflicting: ${this.consoleLink(EDGE_SCREEN.path)}`
        : `Open the ${CONSOLE_SCREEN.name} screen of the Ebbgate console (Deliver → ${CONSOLE_SCREEN.name}), destination "${name}": ${this.consoleLink()}`,
      '',
      i.kind === 'conflicting'
        ? 'The refused messages are kept with their sender; the first stream goes on unaffected.'
        : i.kind === 'amendment'
          ? 'An amendment that failed is kept, with its reason, until someone retries or resolves it; it is never dropped.'
          : 'Results are kept in the outbox and are delivered when the destination answers again; nothing is lost.',
      'This mail is sent once when an incident opens and once when it clears; a copy with the same Message-ID is a resend of the same mail.',
    ].join('\n');
    return { subject, text };
  }
}
