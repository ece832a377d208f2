import { useState } from 'react';
import { useMutation } from '@tanstack/react-query';
import type { InboundMessage } from '@ebbgate/shared';
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { formatBytes, formatDateTime } from '@/lib/format';
import { outcomeOf } from '@/lib/outcome';
import { useListState } from '@/hooks/use-list-state';
import { useBulkAction } from '@/hooks/use-bulk-action';
import { Badge, StatusBadge } from '@/components/ui/badge';
import { BulkProgress } from '@/components/ui/bulk-progress';
import { Button } from '@/components/ui/button';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { ConfirmDialog, Dialog } from '@/components/ui/dialog';
import { DefinitionList, JsonBlock, PageHeader } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { discardInbound, reprocessInbound, useInboundMessage, useInboundMessages, useInvalidateInbound } from '../api/inbound';

const OUTCOMES = ['quarantined', 'rejected', 'conflicting', 'accepted', 'duplicate', 'reprocessed', 'discarded'];
/** Filter labels; `conflicting` is a second sender's stream for a monitor, refused and kept apart, never merged. */
const OUTCOME_TEXT: Record<string, string> = { conflicting: 'conflicting (second sender)' };
const TRANSPORTS = [
  { value: 'http', label: 'HTTP' },
  { value: 'mllp', label: 'MLLP' },
];

/** `api-key:<id>`, `certificate:<SHA-256>`, `source:<address>` in words; long fingerprints shortened (the detail shows them whole). */
function senderText(sender: string | null | undefined, full = false): string | null {
  if (!sender) return null;
  const [kind, ...rest] = sender.split(':');
  const value = rest.join(':');
  if (kind === 'api-key') return `API key ${value}`;
  if (kind === 'certificate') return `certificate ${full || value.length <= 16 ? value : `${value.slice(0, 16)}…`}`;
  if (kind === 'source') return `source ${value}`;
  return sender;
}

function StrangerMark() {
  return (
    <Badge tone="bad" title="Unauthenticated or unknown sender: only its metadata and the start of the message are kept">
      stranger
    </Badge>
  );
}

function OutcomeBadge({ outcome }: { outcome: string }) {
  if (outcome === 'conflicting')
    return (
      <Badge tone="bad" title="Another sender already streams for this monitor; refused and kept, never merged">
        conflicting stream
      </Badge>
    );
  return <StatusBadge status={outcome} />;
}

export function InboundRoute() {
  const list = useListState({ sort: 'receivedAt', order: 'desc' }, { outcome: 'quarantined' });
  const messages = useInboundMessages(list.query);
  const invalidate = useInvalidateInbound();
  const toast = useToast();
  const { can } = useAuth();
  const [selected, setSelected] = useState<Set<string>>(new Set());
  const [confirm, setConfirm] = useState<'reprocess' | 'discard' | null>(null);
  const [open, setOpen] = useState<string | null>(null);
  const reprocess = useBulkAction<unknown>((id) => reprocessInbound(id), outcomeOf);
  const discard = useBulkAction<unknown, string>((id, reason) => discardInbound(id, reason), outcomeOf);
  const selectable = can('reprocessInbound') || can('discardInbound');

  const run = async (kind: 'reprocess' | 'discard', reason: string) => {
    const ids = [...selected];
    setConfirm(null);
    if (kind === 'reprocess') await reprocess.start(ids);
    else await discard.start(ids, reason);
    setSelected(new Set());
    invalidate();
    toast.info(`${kind === 'reprocess' ? 'Reprocess' : 'Discard'} finished for ${ids.length} message${ids.length === 1 ? '' : 's'}`);
  };

  const columns: Column<InboundMessage>[] = [
    {
      key: 'receivedAt',
      header: 'Received',
      sortField: 'receivedAt',
      render: (m) => <span className="num whitespace-nowrap">{formatDateTime(m.receivedAt)}</span>,
    },
    { key: 'transport', header: 'Via', render: (m) => <Badge>{m.transport}</Badge> },
    { key: 'outcome', header: 'Outcome', sortField: 'outcome', render: (m) => <OutcomeBadge outcome={m.outcome} /> },
    { key: 'reason', header: 'Reason', render: (m) => <span className="text-xs">{m.reason ?? <span className="text-muted">—</span>}</span> },
    { key: 'monitor', header: 'Monitor', render: (m) => <span className="font-mono text-xs">{m.monitorIdentifier ?? '—'}</span> },
    {
      key: 'sender',
      header: 'Sender',
      render: (m) => (
        <span className="flex flex-col items-start gap-0.5 text-xs">
          {m.stranger && <StrangerMark />}
          <span className="font-mono">{senderText(m.sender) ?? <span className="text-muted">—</span>}</span>
          {m.sourceAddress && <span className="font-mono text-muted">from {m.sourceAddress}</span>}
        </span>
      ),
    },
    { key: 'batch', header: 'Batch', render: (m) => <span className="font-mono text-xs">{m.batchId ?? '—'}</span> },
    {
      key: 'continuity',
      header: 'Continuity',
      render: (m) =>
        m.continuity ? (
          <span className="text-xs">
            {m.continuity}
            {m.continuityMs ? ` (${m.continuityMs} ms)` : ''}
          </span>
        ) : (
          '—'
        ),
    },
    { key: 'size', header: 'Size', sortField: 'sizeBytes', className: 'text-right', render: (m) => <span className="num">{formatBytes(m.sizeBytes)}</span> },
    {
      key: 'detail',
      header: '',
      render: (m) => (
        <Button size="sm" onClick={() => setOpen(m.id)}>
          Details
        </Button>
      ),
    },
  ];

  return (
    <>
      <PageHeader
        title="Inbound & quarantine"
        description="Every message a monitor sent, with what became of it. Nothing is dropped: quarantined messages wait here to be reprocessed or discarded."
      />
      <ListFilters
        list={list}
        timeRange
        fields={[
          { key: 'outcome', label: 'Outcome', kind: 'select', width: 'w-40', options: OUTCOMES.map((o) => ({ value: o, label: OUTCOME_TEXT[o] ?? o })) },
          { key: 'transport', label: 'Transport', kind: 'select', width: 'w-32', options: TRANSPORTS },
          { key: 'monitor', label: 'Monitor', kind: 'text', width: 'w-44', placeholder: 'identifier' },
        ]}
      >
        {selectable && (
          <div className="ml-auto flex items-end gap-2 self-end">
            {can('reprocessInbound') && (
              <Button variant="primary" disabled={selected.size === 0 || discard.running} busy={reprocess.running} onClick={() => setConfirm('reprocess')}>
                Reprocess selected ({selected.size})
              </Button>
            )}
            {can('discardInbound') && (
              <Button variant="danger" disabled={selected.size === 0 || reprocess.running} busy={discard.running} onClick={() => setConfirm('discard')}>
                Discard selected…
              </Button>
            )}
          </div>
        )}
      </ListFilters>
      <BulkProgress title="Reprocess" items={reprocess.items} />
      <BulkProgress title="Discard" items={discard.items} />
      <DataTable
        caption="Inbound messages"
        columns={columns}
        {...queryTableProps(messages, list)}
        rowId={(m) => m.id}
        selected={selectable ? selected : undefined}
        onSelectedChange={selectable ? setSelected : undefined}
        emptyTitle={list.filters.outcome === 'quarantined' ? 'Quarantine is empty' : 'No inbound messages match'}
        emptyHint="Messages that could not be matched to a monitor or profile land in quarantine."
      />
      <ConfirmDialog
        open={confirm === 'reprocess'}
        title="Reprocess messages"
        confirmLabel={`Reprocess ${selected.size}`}
        message={
          <>
            Run the {selected.size} selected message{selected.size === 1 ? '' : 's'} through intake again with the current monitors and profiles.
          </>
        }
        onClose={() => setConfirm(null)}
        onConfirm={() => run('reprocess', '')}
      />
      <ConfirmDialog
        open={confirm === 'discard'}
        title="Discard messages"
        danger
        confirmLabel={`Discard ${selected.size}`}
        reasonLabel="Reason (kept in the audit log)"
        message={<>The selected messages stay stored for the record but will not be analysed.</>}
        onClose={() => setConfirm(null)}
        onConfirm={(reason) => run('discard', reason)}
      />
      <InboundDetailDialog id={open} onClose={() => setOpen(null)} />
    </>
  );
}

function InboundDetailDialog({ id, onClose }: { id: string | null; onClose: () => void }) {
  const detail = useInboundMessage(id);
  const invalidate = useInvalidateInbound();
  const toast = useToast();
  const { can } = useAuth();
  const [discarding, setDiscarding] = useState(false);
  const reprocess = useMutation({
    mutationFn: reprocessInbound,
    onSuccess: (r) => {
      toast.success(`Reprocess: ${outcomeOf(r) ?? 'done'}`);
      invalidate();
    },
    onError: (e) => toast.error(errorMessage(e)),
  });
  const discard = useMutation({
    mutationFn: (reason: string) => discardInbound(id!, reason),
    onSuccess: () => {
      toast.success('Message discarded');
      setDiscarding(false);
      invalidate();
    },
  });
  const m = detail.data;
  const actionable = m && (m.outcome === 'quarantined' || m.outcome === 'rejected');
  return (
    <>
      <Dialog
        open={!!id}
        title="Inbound message"
        onClose={onClose}
        wide
        footer={
          actionable ? (
            <>
              {can('discardInbound') && (
                <Button variant="danger" onClick={() => setDiscarding(true)}>
                  Discard…
                </Button>
              )}
              {can('reprocessInbound') && (
                <Button variant="primary" busy={reprocess.isPending} onClick={() => reprocess.mutate(id!)}>
                  Reprocess
                </Button>
              )}
            </>
          ) : undefined
        }
      >
        {detail.isPending && <LoadingState />}
        {detail.error && <ErrorState error={detail.error} onRetry={() => detail.refetch()} />}
        {m && (
          <div className="flex flex-col gap-3">
            <DefinitionList
              items={[
                ['Received', formatDateTime(m.receivedAt)],
                ['Transport', m.transport],
                ['Outcome', <OutcomeBadge key="o" outcome={m.outcome} />],
                ['Reason', m.reason ?? '—'],
                [
                  'Sender',
                  m.stranger ? (
                    <span key="s" className="flex items-center gap-1">
                      <StrangerMark /> {senderText(m.sender, true) ?? 'not authenticated'}
                    </span>
                  ) : (
                    (senderText(m.sender, true) ?? '—')
                  ),
                ],
                ['Source address', m.sourceAddress ?? '—'],
                ['Monitor', m.monitorIdentifier ?? '—'],
                ['Batch', m.batchId ?? '—'],
                ['Size', formatBytes(m.sizeBytes)],
                ['Handled', m.handledAt ? `${formatDateTime(m.handledAt)} by ${m.handledBy ?? '—'}` : '—'],
              ]}
            />
            <div>
              <h3 className="mb-1 text-sm font-semibold">As received{m.rawTruncated ? ' (truncated)' : ''}</h3>
              <JsonBlock label="Raw message" value={m.transport === 'mllp' ? m.raw.replace(/\r/g, '\n') : m.raw} />
            </div>
          </div>
        )}
      </Dialog>
      <ConfirmDialog
        open={discarding}
        title="Discard message"
        danger
        confirmLabel="Discard"
        reasonLabel="Reason (kept in the audit log)"
        message="The message stays stored for the record but will not be analysed."
        busy={discard.isPending}
        error={discard.error ? errorMessage(discard.error) : null}
        onClose={() => {
          setDiscarding(false);
          discard.reset();
        }}
        onConfirm={(reason) => discard.mutate(reason)}
      />
    </>
  );
}
