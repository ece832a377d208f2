/**
 * A patient as people know them: name and MRN from the EHR's Patient resource; the FHIR reference
 * only as a fallback (before a delivery named the patient) and as the tooltip.
 */
export function PatientLabel({
  name,
  mrn,
  patientRef,
}: {
  name: string | null | undefined;
  mrn: string | null | undefined;
  patientRef: string | null | undefined;
}) {
  if (!name && !mrn && !patientRef) return <span className="text-muted">—</span>;
  if (!name && !mrn)
    return (
      <span className="font-mono text-xs" title="The EHR has not given the patient's name yet">
        {patientRef}
      </span>
    );
  return (
    <span title={patientRef ?? undefined} data-testid="patient-label">
      <span className="font-medium">{name ?? 'Name not given'}</span>
      {mrn && <span className="text-xs text-muted"> · MRN {mrn}</span>}
    </span>
  );
}
