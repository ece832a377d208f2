import { PatientLabel } from '@/components/ui/patient';
import { ChallengePanel, LineChecks, MechanicsPanel } from '@/components/analysis/line-checks';
import type { TidalVolumeChallengeResult } from '@/lib/analysis';
import { useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import { errorMessage } from '@/lib/api-client';
import { formatDateTime } from '@/lib/format';
import { StatusBadge, VerdictBadge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { ConfirmDialog } from '@/components/ui/dialog';
import { DefinitionList, PageHeader, Panel } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { WaveformPlot } from '@/components/waveform-plot';
import { IndicesPanel } from '@/components/analysis/indices-panel';
import { CyclesTable } from '@/components/analysis/cycles-table';
import { useAssessment, useBedOptions, useMarkInError, useMonitorOf } from '../api/assessments';
import { ObservationsSent } from '../components/observations-sent';

export function AssessmentDetailRoute() {
  const { id = '' } = useParams();
  const detail = useAssessment(id);
  const mark = useMarkInError(id);
  const { can } = useAuth();
  const toast = useToast();
  const [confirming, setConfirming] = useState(false);
  const monitor = useMonitorOf(detail.data?.assessment.monitorId);

  if (detail.isPending) return <LoadingState label="Loading assessment…" />;
  if (detail.error) return <ErrorState error={detail.error} onRetry={() => detail.refetch()} />;
  const { assessment: a, waveform, observations } = detail.data;
  // The engine's challenge result, where the gateway attaches one to the window (or keeps it in the result).
  const challenge =
    (a as { tidalVolumeChallenge?: TidalVolumeChallengeResult | null }).tidalVolumeChallenge ??
    (a.result as { tidalVolumeChallenge?: TidalVolumeChallengeResult | null }).tidalVolumeChallenge ??
    null;
  const named = observations.flatMap((o) => o.deliveries ?? []).find((d) => d.patientRef);
  const patient = {
    patientRef: a.patientRef ?? named?.patientRef ?? null,
    name: a.patientName ?? named?.patientName ?? null,
    mrn: a.patientMrn ?? named?.patientMrn ?? null,
  };

  return (
    <>
      <p className="mb-1 text-xs">
        <Link to="/assessments" className="text-ink-700 underline">
          ← Assessments
        </Link>
      </p>
      <PageHeader
        title={`Assessment of ${formatDateTime(a.windowStart)}`}
        description={
          <span className="flex items-center gap-2">
            <VerdictBadge verdict={a.verdict} /> window {formatDateTime(a.windowStart)} – {formatDateTime(a.windowEnd)}
          </span>
        }
        actions={
          <>
            {can('reanalyse') && (
              <Link
                className="rounded border border-line bg-white px-2 py-1 text-sm text-ink-900 hover:bg-ink-50"
                to={`/reanalyse?assessment=${encodeURIComponent(a.id)}`}
              >
                Reanalyse this window…
              </Link>
            )}
            {can('markInError') && !a.enteredInError && (
              <Button variant="danger" onClick={() => setConfirming(true)}>
                Mark in error…
              </Button>
            )}
          </>
        }
      />
      {a.enteredInError && (
        <div role="status" className="mb-3 rounded border border-error/40 bg-error-bg px-3 py-2 text-sm text-error">
          <strong>Entered in error</strong> by {a.enteredInErrorBy ?? 'unknown'} on {formatDateTime(a.enteredInErrorAt)}: {a.enteredInErrorReason}. The EHR copy
          was amended to status entered-in-error.
        </div>
      )}
      <div className="flex flex-col gap-3">
        <Panel title="Window">
          <DefinitionList
            items={[
              [
                'Monitor',
                <span key="m" className="font-mono text-xs">
                  {monitor.data?.identifier ?? a.monitorId}
                </span>,
              ],
              ['Bed', a.bedId ? <BedName key="b" id={a.bedId} /> : 'unassigned'],
              ['Patient', <PatientLabel key="p" name={patient.name} mrn={patient.mrn} patientRef={patient.patientRef} />],
              ['Engine', a.engineVersion],
              ['EHR delivery', a.deliveryStatus ? <StatusBadge status={a.deliveryStatus} /> : '—'],
              ['Stored', formatDateTime(a.createdAt)],
            ]}
          />
        </Panel>
        <Panel title="Waveform of the stored window">
          <WaveformPlot waveform={waveform} analysis={a.result} />
        </Panel>
        <Panel title="Indices">
          <IndicesPanel analysis={a.result} />
        </Panel>
        {challenge && (
          <Panel title="Tidal volume challenge">
            <ChallengePanel challenge={challenge} />
          </Panel>
        )}
        <div className="grid gap-3 lg:grid-cols-2">
          <Panel title="Respiratory mechanics">
            <MechanicsPanel mechanics={a.result.respiratoryMechanics ?? null} />
          </Panel>
          <Panel title="Arterial line checks">
            <LineChecks flushTests={a.result.arterialLine?.flushTests ?? []} dampingEstimate={a.result.arterialLine?.dampingEstimate ?? null} />
          </Panel>
        </div>
        <Panel title="Respiratory cycles">
          <CyclesTable analysis={a.result} />
        </Panel>
        <Panel title="Sent to the EHR">
          <ObservationsSent observations={observations} attemptsLink={can('deliveries') ? `/deliveries?assessment=${encodeURIComponent(a.id)}` : undefined} />
        </Panel>
      </div>
      <ConfirmDialog
        open={confirming}
        title="Mark assessment in error"
        danger
        confirmLabel="Mark in error"
        message={
          <>
            The assessment stays stored but is shown as entered in error, and the Observations already in the EHR are amended to <code>entered-in-error</code>.
            This cannot be undone.
          </>
        }
        reasonLabel="Reason (kept in the audit log)"
        busy={mark.isPending}
        error={mark.error ? errorMessage(mark.error) : null}
        onClose={() => {
          setConfirming(false);
          mark.reset();
        }}
        onConfirm={(reason) =>
          mark.mutate(reason, {
            onSuccess: () => {
              setConfirming(false);
              toast.success('Marked in error; the EHR copy is being amended');
            },
          })
        }
      />
    </>
  );
}

function BedName({ id }: { id: string }) {
  const beds = useBedOptions();
  const bed = beds.data?.items.find((b) => b.id === id);
  return <>{bed ? `${bed.name} · ${bed.unit}` : id}</>;
}
