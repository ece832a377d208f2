import { PatientLabel } from '@/components/ui/patient';
import { useMemo } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import type { AssessmentSummary } from '@ebbgate/shared';
import { formatDateTime, formatNumber, humanize } from '@/lib/format';
import { useListState } from '@/hooks/use-list-state';
import { Badge, StatusBadge, VerdictBadge } from '@/components/ui/badge';
import { DataTable, type Column } from '@/components/ui/data-table';
import { queryTableProps } from '@/components/ui/query-table';
import { ListFilters } from '@/components/ui/list-filters';
import { PageHeader } from '@/components/ui/page';
import { Cautions } from '@/components/analysis/cautions';
import { useAssessments, useBedOptions } from '../api/assessments';
import { FLAG_OPTIONS } from '../components/flag-options';

const INDEX_OPTIONS = [
  { value: 'ppv', label: 'PPV' },
  { value: 'spv', label: 'SPV' },
  { value: 'deltaPop', label: 'ΔPOP' },
  { value: 'perfusionIndex', label: 'Perfusion index' },
  { value: 'heartRate', label: 'Heart rate' },
  { value: 'respiratoryRate', label: 'Respiratory rate' },
];
const VERDICT_OPTIONS = [
  { value: 'valid', label: 'Valid' },
  { value: 'questionable', label: 'Questionable' },
  { value: 'not-valid', label: 'Not valid' },
];

function Value({ v, unit, notValid }: { v: number | null; unit: string; notValid: boolean }) {
  if (v === null) return <span className="text-muted">—</span>;
  return (
    <span className={`num ${notValid ? 'text-notvalid line-through decoration-notvalid/70' : ''}`} title={notValid ? 'Not valid: see the flags' : undefined}>
      {formatNumber(v)}
      <span className="ml-0.5 text-xs text-muted">{unit}</span>
    </span>
  );
}

export function AssessmentsRoute() {
  const list = useListState({ sort: 'windowStart', order: 'desc' });
  const assessments = useAssessments(list.query);
  const beds = useBedOptions();
  const navigate = useNavigate();
  const bedName = useMemo(() => new Map((beds.data?.items ?? []).map((b) => [b.id, `${b.name} · ${b.unit}`])), [beds.data]);

  const columns: Column<AssessmentSummary>[] = [
    {
      key: 'windowStart',
      header: 'Window',
      sortField: 'windowStart',
      render: (a) => (
        <Link className="num whitespace-nowrap text-ink-700 underline-offset-2 hover:underline" to={`/assessments/${a.id}`}>
          {formatDateTime(a.windowStart)}
        </Link>
      ),
    },
    { key: 'bed', header: 'Bed', render: (a) => (a.bedId ? (bedName.get(a.bedId) ?? a.bedId) : <span className="text-muted">unassigned</span>) },
    {
      key: 'patient',
      header: 'Patient',
      sortField: 'patientRef',
      render: (a) => <PatientLabel name={a.patientName} mrn={a.patientMrn} patientRef={a.patientRef} />,
    },
    { key: 'verdict', header: 'Verdict', sortField: 'verdict', render: (a) => <VerdictBadge verdict={a.verdict} /> },
    { key: 'ppv', header: 'PPV', sortField: 'ppv', className: 'text-right', render: (a) => <Value v={a.ppv} unit="%" notValid={a.verdict === 'not-valid'} /> },
    {
      key: 'spv',
      header: 'SPV',
      sortField: 'spv',
      className: 'text-right',
      render: (a) => <Value v={a.spv} unit="mmHg" notValid={a.verdict === 'not-valid'} />,
    },
    {
      key: 'deltaPop',
      header: 'ΔPOP',
      sortField: 'deltaPop',
      className: 'text-right',
      render: (a) => <Value v={a.deltaPop} unit="%" notValid={a.verdict === 'not-valid'} />,
    },
    { key: 'pi', header: 'PI', className: 'text-right', render: (a) => <Value v={a.perfusionIndex} unit="%" notValid={a.verdict === 'not-valid'} /> },
    { key: 'hr', header: 'HR', className: 'text-right', render: (a) => <Value v={a.heartRate} unit="/min" notValid={false} /> },
    {
      key: 'flags',
      header: 'Flags',
      render: (a) => (
        <span className="flex max-w-64 flex-wrap gap-1">
          {a.flags.slice(0, 3).map((f) => (
            <Badge key={f} tone="warn">
              {humanize(f)}
            </Badge>
          ))}
          {a.flags.length > 3 && <Badge>+{a.flags.length - 3}</Badge>}
        </span>
      ),
    },
    {
      key: 'delivery',
      header: 'EHR',
      render: (a) =>
        a.enteredInError ? (
          <StatusBadge status="entered-in-error" />
        ) : a.deliveryStatus ? (
          <StatusBadge status={a.deliveryStatus} />
        ) : (
          <span className="text-muted">—</span>
        ),
    },
  ];

  return (
    <>
      <PageHeader title="Assessments" description="Every analysed window, newest first. Open one to see its waveform, marks and what was sent to the EHR." />
      <div className="mb-2">
        <Cautions compact />
      </div>
      <ListFilters
        list={list}
        timeRange
        fields={[
          {
            key: 'bed',
            label: 'Bed',
            kind: 'select',
            width: 'w-44',
            options: (beds.data?.items ?? []).map((b) => ({ value: b.id, label: `${b.name} · ${b.unit}` })),
          },
          { key: 'patient', label: 'Patient', kind: 'text', width: 'w-36', placeholder: 'identifier' },
          { key: 'index', label: 'Has index', kind: 'select', width: 'w-36', options: INDEX_OPTIONS },
          { key: 'verdict', label: 'Verdict', kind: 'select', width: 'w-36', options: VERDICT_OPTIONS },
          { key: 'flag', label: 'Flag', kind: 'select', width: 'w-48', options: FLAG_OPTIONS },
        ]}
      />
      <DataTable
        caption="Assessments"
        columns={columns}
        {...queryTableProps(assessments, list)}
        rowId={(a) => a.id}
        onRowClick={(a) => navigate(`/assessments/${a.id}`)}
        emptyTitle="No assessments match"
        emptyHint="Windows appear here once a mapped monitor sends data. Widen the filters or the time range."
      />
    </>
  );
}
