import { useState, type FormEvent } from 'react';
import { Link, useSearchParams } from 'react-router-dom';
import { errorMessage, type Query } from '@/lib/api-client';
import { formatDateTime, localInputToIso } from '@/lib/format';
import { Button } from '@/components/ui/button';
import { SelectField, TextField } from '@/components/ui/field';
import { PageHeader, Panel } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { useAssessmentSummary, useBedList, useReanalyse, useScopeAssessments, type ReanalysisAnswer, type ReanalysisRequest } from '../api/reanalyse';
import { SideBySide, pairWindows } from '../components/side-by-side';

type Scope = 'bed' | 'since';

/**
 * Reanalyse stored windows with the engine this gateway runs: one assessment (from its page), a
 * bed over a span, or everything since a time. Earlier results stay; both are shown side by side.
 */
export function ReanalyseRoute() {
  const [search] = useSearchParams();
  const assessmentId = search.get('assessment');
  const one = useAssessmentSummary(assessmentId);
  const beds = useBedList();
  const reanalyse = useReanalyse();
  const [scopeKind, setScopeKind] = useState<Scope>('bed');
  const [bedId, setBedId] = useState('');
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const [formError, setFormError] = useState<string | null>(null);
  const [done, setDone] = useState<{ answer: ReanalysisAnswer; scope: Query } | null>(null);
  const list = useScopeAssessments(done?.scope ?? null, Boolean(done));

  if (assessmentId && one.isPending) return <LoadingState label="Loading the assessment…" />;
  if (assessmentId && one.error) return <ErrorState error={one.error} onRetry={() => one.refetch()} />;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    setFormError(null);
    let body: ReanalysisRequest;
    let scope: Query;
    if (one.data) {
      const a = one.data;
      const end = new Date(Date.parse(a.windowStart) + 1).toISOString();
      body = { monitorId: a.monitorId, from: a.windowStart, to: end };
      scope = { monitor: a.monitorId, from: a.windowStart, to: a.windowStart };
    } else if (scopeKind === 'bed') {
      const bed = beds.data?.items.find((b) => b.id === bedId);
      const f = localInputToIso(from);
      const t = localInputToIso(to);
      if (!bed) return setFormError('Choose a bed.');
      if (!bed.monitorId) return setFormError('No monitor is assigned to this bed.');
      if (!f || !t) return setFormError('Give the start and end of the span.');
      if (f >= t) return setFormError('The start must be before the end.');
      body = { monitorId: bed.monitorId, from: f, to: t };
      scope = { bed: bed.id, from: f, to: t };
    } else {
      const f = localInputToIso(from);
      if (!f) return setFormError('Give the time to start from.');
      body = { from: f };
      scope = { from: f };
    }
    reanalyse.mutate(body, { onSuccess: (answer) => setDone({ answer, scope }) });
  };

  const pairs = done && list.data ? pairWindows(list.data.items, done.answer.engineVersion) : [];
  const finished = pairs.filter((p) => p.after).length;

  return (
    <>
      <PageHeader
        title="Reanalyse"
        description="Run stored windows again with the engine this gateway runs. Earlier assessments stay; each window then has both results."
      />
      <Panel title="What to reanalyse">
        <form onSubmit={submit} className="flex flex-col gap-3" aria-label="Reanalysis scope">
          {one.data ? (
            <p className="text-sm">
              This window: {formatDateTime(one.data.windowStart)} – {formatDateTime(one.data.windowEnd)}, engine {one.data.engineVersion}.{' '}
              <Link className="text-ink-700 underline" to={`/assessments/${encodeURIComponent(one.data.id)}`}>
                Back to the assessment
              </Link>
            </p>
          ) : (
            <>
              <fieldset className="flex gap-4 text-sm">
                <legend className="mb-1 text-xs font-medium text-ink-800">Scope</legend>
                <label className="inline-flex items-center gap-1">
                  <input type="radio" name="scope" checked={scopeKind === 'bed'} onChange={() => setScopeKind('bed')} /> A bed over a span
                </label>
                <label className="inline-flex items-center gap-1">
                  <input type="radio" name="scope" checked={scopeKind === 'since'} onChange={() => setScopeKind('since')} /> Everything since a time
                </label>
              </fieldset>
              <div className="flex flex-wrap gap-2">
                {scopeKind === 'bed' && (
                  <SelectField
                    label="Bed"
                    value={bedId}
                    onChange={(e) => setBedId(e.target.value)}
                    placeholder="Choose a bed"
                    wrapClassName="w-56"
                    options={(beds.data?.items ?? []).map((b) => ({ value: b.id, label: `${b.name} · ${b.unit}` }))}
                  />
                )}
                <TextField
                  label={scopeKind === 'bed' ? 'From' : 'Since'}
                  type="datetime-local"
                  value={from}
                  onChange={(e) => setFrom(e.target.value)}
                  wrapClassName="w-56"
                />
                {scopeKind === 'bed' && <TextField label="To" type="datetime-local" value={to} onChange={(e) => setTo(e.target.value)} wrapClassName="w-56" />}
              </div>
            </>
          )}
          {formError && (
            <p role="alert" className="text-sm text-error">
              {formError}
            </p>
          )}
          {reanalyse.error && (
            <p role="alert" className="text-sm text-error">
              {errorMessage(reanalyse.error)}
            </p>
          )}
          <div>
            <Button type="submit" variant="primary" busy={reanalyse.isPending}>
              Queue reanalysis
            </Button>
          </div>
        </form>
      </Panel>
      {done && (
        <div className="mt-3">
          <Panel title="Earlier and new results">
            <p className="mb-2 text-sm" role="status">
              {done.answer.queued} window{done.answer.queued === 1 ? '' : 's'} queued for engine {done.answer.engineVersion}
              {done.answer.queued === 0
                ? ' (the windows in scope already have a result from this engine, or there are none).'
                : `; ${finished} of ${pairs.length} analysed so far.`}
            </p>
            {pairs.length > 0 ? <SideBySide pairs={pairs} /> : <p className="text-sm text-muted">No earlier results in the scope.</p>}
          </Panel>
        </div>
      )}
    </>
  );
}
