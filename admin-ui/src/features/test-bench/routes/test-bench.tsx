import { useState } from 'react';
import { ApiError, errorMessage } from '@/lib/api-client';
import { Button } from '@/components/ui/button';
import { SelectField } from '@/components/ui/field';
import { PageHeader, Panel } from '@/components/ui/page';
import { EmptyState } from '@/components/ui/states';
import { WaveformPlot } from '@/components/waveform-plot';
import { IndicesPanel } from '@/components/analysis/indices-panel';
import { CyclesTable } from '@/components/analysis/cycles-table';
import { Cautions } from '@/components/analysis/cautions';
import { useToast } from '@/components/ui/toast';
import { usePreview, useProfileOptions } from '../api/preview';
import { DropZone } from '../components/drop-zone';
import { ParseReportView } from '../components/parse-report';

export function TestBenchRoute() {
  const [file, setFile] = useState<File | null>(null);
  const [profileId, setProfileId] = useState('');
  const profiles = useProfileOptions();
  const preview = usePreview();
  const toast = useToast();
  const result = preview.data;

  const run = () => {
    if (!file) return;
    preview.mutate(
      { file, profileId: profileId || undefined },
      {
        onSuccess: (r) => toast.success(`Analysed ${r.analysis.cycles.length} cycles from ${file.name}`),
      },
    );
  };

  return (
    <>
      <PageHeader
        title="Test bench"
        description="Try a capture against a monitor profile before the monitor goes live. Nothing is stored or sent to the EHR."
      />
      <div className="mb-3 grid gap-3 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <Panel title="Capture">
          <div className="flex flex-col gap-3">
            <DropZone
              file={file}
              onFile={(f) => {
                setFile(f);
                preview.reset();
              }}
              disabled={preview.isPending}
            />
            <div className="flex flex-wrap items-end gap-3">
              <SelectField
                label="Monitor profile"
                wrapClassName="w-72"
                value={profileId}
                onChange={(e) => setProfileId(e.target.value)}
                placeholder={profiles.isPending ? 'Loading profiles…' : 'None (roles from the file)'}
                options={(profiles.data?.items ?? []).map((p) => ({ value: p.id, label: `${p.name} — ${p.manufacturer} ${p.model}` }))}
                hint={profiles.error ? `Profiles could not be loaded: ${errorMessage(profiles.error)}` : 'Maps channel codes to roles, units and scaling'}
              />
              <Button variant="primary" onClick={run} disabled={!file} busy={preview.isPending}>
                Analyse capture
              </Button>
            </div>
            {preview.error && (
              <div role="alert" className="rounded border border-error/30 bg-error-bg px-3 py-2 text-sm text-error">
                <p className="font-semibold">{preview.error instanceof ApiError ? preview.error.problem.title : 'Analysis failed'}</p>
                <p>{preview.error instanceof ApiError ? preview.error.problem.detail : errorMessage(preview.error)}</p>
                {preview.error instanceof ApiError && (preview.error.problem.errors?.length ?? 0) > 0 && (
                  <ul className="mt-1 list-disc pl-4 text-xs">
                    {preview.error.problem.errors!.map((e) => (
                      <li key={e.path + e.message}>
                        <code>{e.path}</code>: {e.message}
                      </li>
                    ))}
                  </ul>
                )}
              </div>
            )}
          </div>
        </Panel>
        <Panel title="Parse report">
          {result ? (
            <ParseReportView report={result.parseReport} />
          ) : (
            <p className="text-sm text-muted">Shown after the capture is read: format, channels, sample rates and any warnings.</p>
          )}
        </Panel>
      </div>

      {!result && !preview.isPending && (
        <div className="flex flex-col gap-3">
          <EmptyState title="No capture analysed yet">Drop a file above, pick its monitor profile and choose “Analyse capture”.</EmptyState>
          <Cautions compact />
        </div>
      )}
      {result && (
        <div className="flex flex-col gap-3">
          <Panel title="Waveform">
            <WaveformPlot waveform={result.waveform} analysis={result.analysis} />
          </Panel>
          <Panel title="Indices">
            <IndicesPanel analysis={result.analysis} />
          </Panel>
          <Panel title="Respiratory cycles">
            <CyclesTable analysis={result.analysis} />
          </Panel>
        </div>
      )}
    </>
  );
}
