import { PatientLabel } from '@/components/ui/patient';
import { useState } from 'react';
import { useMutation } from '@tanstack/react-query';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime } from '@/lib/format';
import { StatusBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ConfirmDialog, Dialog } from '@/components/ui/dialog';
import { DefinitionList, JsonBlock } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { discardDelivery, requeueAndFollow, useDelivery, useInvalidateDeliveries } from '../api/deliveries';

export function DeliveryDetailDialog({ id, onClose, canManage }: { id: string | null; onClose: () => void; canManage: boolean }) {
  const detail = useDelivery(id);
  const invalidate = useInvalidateDeliveries();
  const toast = useToast();
  const [discarding, setDiscarding] = useState(false);
  const retry = useMutation({
    mutationFn: (did: string) => requeueAndFollow(did, 'retry'),
    onSuccess: (r) => {
      toast.success(`Retry: ${r}`);
      invalidate();
    },
    onError: (e) => {
      toast.error(`Retry: ${errorMessage(e)}`);
      invalidate();
    },
  });
  const discard = useMutation({
    mutationFn: ({ id: did, reason }: { id: string; reason: string }) => discardDelivery(did, reason),
    onSuccess: () => {
      toast.success('Delivery discarded');
      setDiscarding(false);
      invalidate();
    },
  });
  const d = detail.data;
  const open = d && (d.status === 'failed' || d.status === 'pending' || d.status === 'waiting-context');

  return (
    <>
      <Dialog
        open={!!id}
        title={`Delivery ${id ?? ''}`}
        onClose={onClose}
        wide
        footer={
          canManage && open ? (
            <>
              <Button variant="danger" onClick={() => setDiscarding(true)}>
                Discard…
              </Button>
              <Button variant="primary" busy={retry.isPending} onClick={() => retry.mutate(id!)}>
                Retry now
              </Button>
            </>
          ) : undefined
        }
      >
        {detail.isPending && <LoadingState />}
        {detail.error && <ErrorState error={detail.error} onRetry={() => detail.refetch()} />}
        {d && (
          <div className="flex flex-col gap-3">
            <DefinitionList
              items={[
                ['Status', <StatusBadge key="s" status={d.status} />],
                ['Index', `${d.index} (${d.kind})`],
                ['Destination', d.destinationId],
                ['Patient', <PatientLabel key="p" name={d.patientName} mrn={d.patientMrn} patientRef={d.patientRef} />],
                ['Queued', formatDateTime(d.createdAt)],
                ['Delivered', formatDateTime(d.deliveredAt)],
                ['Next attempt', formatDateTime(d.nextAttemptAt)],
                ['Last error', d.lastError ?? '—'],
                ...(d.discardReason ? [['Discard reason', d.discardReason] as [string, string]] : []),
              ]}
            />
            <div>
              <h3 className="mb-1 text-sm font-semibold">Attempts</h3>
              {d.attempts.length === 0 ? (
                <p className="text-sm text-muted">Not tried yet.</p>
              ) : (
                <table className="w-full text-xs" aria-label="Attempts">
                  <thead className="text-left text-muted">
                    <tr>
                      <th className="py-0.5">At</th>
                      <th>HTTP</th>
                      <th>Outcome</th>
                      <th>Detail</th>
                    </tr>
                  </thead>
                  <tbody>
                    {d.attempts.map((a, i) => (
                      <tr key={i} className="border-t border-line/60 align-top">
                        <td className="num py-0.5 pr-2">{formatDateTime(a.at)}</td>
                        <td className="num pr-2">{a.httpStatus ?? '—'}</td>
                        <td className="pr-2">{a.outcome}</td>
                        <td>
                          {a.detail ?? ''}
                          {a.response ? (
                            <details>
                              <summary className="cursor-pointer text-ink-700">OperationOutcome</summary>
                              <JsonBlock label="EHR response" value={a.response} />
                            </details>
                          ) : null}
                        </td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              )}
            </div>
            <div>
              <h3 className="mb-1 text-sm font-semibold">Payload</h3>
              <JsonBlock label="Payload" value={d.payload} />
            </div>
          </div>
        )}
      </Dialog>
      <ConfirmDialog
        open={discarding}
        title="Discard delivery"
        danger
        confirmLabel="Discard"
        reasonLabel="Reason (kept in the audit log)"
        message="This Observation will not be sent to the EHR."
        busy={discard.isPending}
        error={discard.error ? errorMessage(discard.error) : null}
        onClose={() => {
          setDiscarding(false);
          discard.reset();
        }}
        onConfirm={(reason) => discard.mutate({ id: id!, reason })}
      />
    </>
  );
}
