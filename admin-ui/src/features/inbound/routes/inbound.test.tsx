import { afterEach, describe, expect, it, vi } from 'vitest';
import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { inboundOutcomeSchema } from '@ebbgate/shared';
import { fakeGateway, renderApp, SESSION } from '@/test/render';
import { InboundRoute } from './inbound';

afterEach(() => vi.unstubAllGlobals());

const FINGERPRINT = 'a1'.repeat(32);
const base = {
  transport: 'mllp',
  monitorIdentifier: '0EBB000000000007',
  batchId: null,
  sizeBytes: 420,
  continuity: null,
  continuityMs: null,
  receivedAt: '2026-12-01T21:00:00Z',
};
const messages = [
  {
    ...base,
    id: 'i1',
    outcome: 'conflicting',
    reason: 'Another sender already streams for this monitor',
    sender: `certificate:${FINGERPRINT}`,
    sourceAddress: '10.20.0.31',
    stranger: false,
  },
  { ...base, id: 'i2', outcome: 'rejected', reason: 'The sender is not authenticated.', sender: null, sourceAddress: '203.0.113.9', stranger: true },
  { ...base, id: 'i3', outcome: 'accepted', reason: null, sender: 'api-key:k42', sourceAddress: '10.20.0.12', stranger: false, transport: 'http' },
];

function gateway() {
  return fakeGateway((c) => {
    if (c.url.pathname === '/api/v1/auth/session') return { body: SESSION(['integrator']) };
    if (c.url.pathname === '/api/v1/inbound-messages') return { body: { items: messages, page: 1, pageSize: 25, total: messages.length } };
    if (c.url.pathname === '/api/v1/inbound-messages/i1')
      return { body: { ...messages[0], raw: 'MSH|^~\\&|', rawTruncated: false, handledAt: null, handledBy: null } };
    if (c.url.pathname === '/api/v1/inbound-messages/i2')
      return { body: { ...messages[1], raw: 'MSH|', rawTruncated: true, handledAt: null, handledBy: null } };
    return undefined;
  });
}
const lastListQuery = (gw: ReturnType<typeof gateway>) =>
  Object.fromEntries(gw.calls.filter((c) => c.url.pathname === '/api/v1/inbound-messages').at(-1)!.url.searchParams);

describe('inbound messages: sender, source, strangers, conflicting', () => {
  it('shows who sent each message, from where, marks strangers and labels conflicting streams', async () => {
    gateway();
    renderApp(<InboundRoute />);
    const table = await screen.findByRole('table');
    expect(await within(table).findByText('conflicting stream')).toBeTruthy();
    const rows = within(table).getAllByRole('row');
    const text = (i: string) => rows.find((r) => r.textContent?.includes(i))!;
    const conflicting = rows.find((r) => r.textContent?.includes('conflicting stream'));
    expect(conflicting).toBeTruthy();
    expect(conflicting!.textContent).toContain(`certificate ${FINGERPRINT.slice(0, 16)}…`);
    expect(conflicting!.textContent).toContain('from 10.20.0.31');
    expect(conflicting!.textContent).not.toContain('stranger');
    const stranger = text('203.0.113.9');
    expect(stranger).toBeTruthy();
    expect(within(stranger).getByText('stranger')).toBeTruthy();
    expect(text('10.20.0.12').textContent).toContain('API key k42');
  });

  it('offers conflicting as its own filter and sends it to the server', async () => {
    expect(inboundOutcomeSchema.options).toContain('conflicting');
    const gw = gateway();
    renderApp(<InboundRoute />);
    await screen.findByRole('table');
    const select = screen.getByLabelText('Outcome') as HTMLSelectElement;
    // Every outcome the gateway can store can be filtered on.
    const values = [...select.options].map((o) => o.value).filter(Boolean);
    expect(values.sort()).toEqual([...inboundOutcomeSchema.options].sort());
    expect([...select.options].find((o) => o.value === 'conflicting')!.textContent).toBe('conflicting (second sender)');
    await userEvent.selectOptions(select, 'conflicting');
    await waitFor(() => expect(lastListQuery(gw)).toMatchObject({ outcome: 'conflicting', page: '1' }));
  });

  it('shows sender (whole fingerprint), source address and the stranger mark in the detail', async () => {
    gateway();
    renderApp(<InboundRoute />);
    const buttons = await screen.findAllByRole('button', { name: 'Details' });
    await userEvent.click(buttons[0]!);
    let dialog = await screen.findByRole('dialog', { name: 'Inbound message' });
    await waitFor(() => expect(dialog.textContent).toContain(`certificate ${FINGERPRINT}`));
    expect(dialog.textContent).toContain('10.20.0.31');
    expect(within(dialog).getByText('conflicting stream')).toBeTruthy();
    await userEvent.click(within(dialog).getByRole('button', { name: 'Close' }));

    await userEvent.click(screen.getAllByRole('button', { name: 'Details' })[1]!);
    dialog = await screen.findByRole('dialog', { name: 'Inbound message' });
    await waitFor(() => expect(dialog.textContent).toContain('203.0.113.9'));
    expect(within(dialog).getByText('stranger')).toBeTruthy();
    expect(dialog.textContent).toContain('not authenticated');
  });
});
