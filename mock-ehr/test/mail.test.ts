import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CaughtMail, RunningMockEhr } from '../src/index.js';
import { admin, startTestEhr } from './helpers.js';

// The SMTP catcher, driven by an independent SMTP client (nodemailer, plain SMTP with ignoreTLS
// because the catcher offers no STARTTLS). Reference for the escaping check: HTML Living Standard,
// "Escaping a string" (&, <, >, " as character references).

let ehr: RunningMockEhr;
beforeAll(async () => {
  ehr = await startTestEhr();
});
afterAll(() => ehr.stop());

const send = (subject: string, text: string) =>
  nodemailer
    .createTransport({ host: '127.0.0.1', port: ehr.smtpPort, secure: false, ignoreTLS: true })
    .sendMail({ from: 'Ebbgate alerts <alerts@ebbgate.invalid>', to: 'on-call@harrowmere.invalid, icu-lead@harrowmere.invalid', subject, text });

describe('SMTP catcher', () => {
  it('receives a mail sent with nodemailer and lists it parsed', async () => {
    const info = await send('Delivery to the EHR is down', 'Since 10:02, 14 results are waiting.');
    expect(info.accepted).toHaveLength(2);
    const list = (await admin(ehr, 'GET', 'mail')).body as CaughtMail[];
    expect(list).toHaveLength(1);
    expect(list[0]).toMatchObject({
      from: '"Ebbgate alerts" <alerts@ebbgate.invalid>',
      to: ['on-call@harrowmere.invalid', 'icu-lead@harrowmere.invalid'],
      subject: 'Delivery to the EHR is down',
      envelopeFrom: 'alerts@ebbgate.invalid',
    });
    expect(list[0]!.text.trim()).toBe('Since 10:02, 14 results are waiting.');
    expect(Date.parse(list[0]!.date!)).not.toBeNaN();
  });

  it('shows mail on an HTML page with everything escaped', async () => {
    await send('<script>alert(1)</script>', 'a & b < c');
    const html = await (await fetch(`${ehr.baseUrl}/mail`)).text();
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(html).toContain('a &amp; b &lt; c');
    expect(html).not.toContain('<script>alert');
  });

  it('forgets mail on DELETE', async () => {
    expect((await admin(ehr, 'DELETE', 'mail')).status).toBe(204);
    expect((await admin(ehr, 'GET', 'mail')).body).toEqual([]);
  });
});
