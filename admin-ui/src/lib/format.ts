/** Formatting shared by every screen, so a time or a percentage reads the same everywhere. */
const dateTime = new Intl.DateTimeFormat('en-GB', {
  year: 'numeric',
  month: 'short',
  day: '2-digit',
  hour: '2-digit',
  minute: '2-digit',
  second: '2-digit',
  hour12: false,
});

export function formatDateTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : dateTime.format(d);
}

export function formatNumber(v: number | null | undefined, digits = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return v.toFixed(digits);
}

export function formatValue(v: number | null | undefined, unit: string, digits = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const u = displayUnit(unit);
  return u ? `${v.toFixed(digits)} ${u}` : v.toFixed(digits);
}

export function formatBytes(n: number | null | undefined): string {
  if (n === null || n === undefined) return '—';
  if (n < 1024) return `${n} B`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KiB`;
  return `${(n / 1024 / 1024).toFixed(1)} MiB`;
}

/** `datetime-local` input value → ISO with offset (what the list endpoints accept). */
export function localInputToIso(v: string | undefined): string | undefined {
  if (!v) return undefined;
  const d = new Date(v);
  return Number.isNaN(d.getTime()) ? undefined : d.toISOString();
}

/**
 * A wait in words, rounded up so the user never tries too early: 45 → "45 seconds", 61 → "2 minutes",
 * 3600 → "1 hour", 5400 → "1 hour 30 minutes".
 */
export function formatWait(seconds: number): string {
  const plural = (n: number, unit: string) => `${n} ${unit}${n === 1 ? '' : 's'}`;
  const s = Math.max(1, Math.ceil(seconds));
  if (s < 60) return plural(s, 'second');
  const minutes = Math.ceil(s / 60);
  if (minutes < 60) return plural(minutes, 'minute');
  const hours = Math.floor(minutes / 60);
  const rest = minutes % 60;
  return rest === 0 ? plural(hours, 'hour') : `${plural(hours, 'hour')} ${plural(rest, 'minute')}`;
}

/** ISO time → `datetime-local` input value in local time (minutes, seconds when set); '' for none. */
export function isoToLocalInput(iso: string | undefined): string {
  if (!iso) return '';
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return '';
  const p = (n: number, w = 2) => String(n).padStart(w, '0');
  const base = `${p(d.getFullYear(), 4)}-${p(d.getMonth() + 1)}-${p(d.getDate())}T${p(d.getHours())}:${p(d.getMinutes())}`;
  return d.getSeconds() || d.getMilliseconds() ? `${base}:${p(d.getSeconds())}` : base;
}

export function humanize(code: string): string {
  const s = code.replace(/[-_]/g, ' ');
  return s.charAt(0).toUpperCase() + s.slice(1);
}

/** UCUM codes as people write them: `mm[Hg]` → mmHg, `cm[H2O]` → cmH2O, `1` (ratio) → nothing. */
export function displayUnit(unit: string): string {
  if (unit === '1') return '';
  return unit.replace('mm[Hg]', 'mmHg').replace('cm[H2O]', 'cmH2O');
}
