import type { CaughtMail } from './mail-catcher.js';

// GET /mail: a small page listing caught mail, newest first. Everything from the mail is escaped.

export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

export function mailPage(mails: CaughtMail[]): string {
  const rows = [...mails].reverse().map(
    (m) => `
    <article>
      <header><strong>${escapeHtml(m.subject || '(no subject)')}</strong>
        <small>#${m.id} · ${escapeHtml(m.date ?? m.receivedAt)}</small></header>
      <p class="meta">From ${escapeHtml(m.from)} · To ${escapeHtml(m.to.join(', '))}</p>
      <pre>${escapeHtml(m.text)}</pre>
    </article>`,
  );
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Mock EHR mail catcher</title>
<meta http-equiv="refresh" content="10">
<style>
  body { font: 15px/1.45 system-ui, sans-serif; margin: 2rem auto; max-width: 56rem; padding: 0 1rem; color: #1d2630; }
  article { border: 1px solid #c9d3dc; border-radius: 6px; padding: .75rem 1rem; margin: .75rem 0; }
  header { display: flex; justify-content: space-between; gap: 1rem; }
  .meta { color: #4d5b68; margin: .25rem 0; }
  pre { white-space: pre-wrap; background: #f3f6f8; padding: .5rem; border-radius: 4px; }
</style></head>
<body><h1>Mail caught by the mock EHR</h1>
<p>${mails.length} message(s); the page refreshes every 10 s. JSON: <code>GET /_admin/mail</code>.</p>
${rows.join('\n') || '<p>No mail yet.</p>'}
</body></html>`;
}
