import { useState } from 'react';
import type { ApiKeyIssued } from '@ebbgate/shared';
import { Button } from '@/components/ui/button';
import { Dialog } from '@/components/ui/dialog';

/** The key is shown here once; the gateway keeps only a hash of it. */
export function ApiKeyDialog({ issued, monitor, onClose }: { issued: ApiKeyIssued | null; monitor: string; onClose: () => void }) {
  const [copied, setCopied] = useState<'yes' | 'failed' | null>(null);
  const copy = async () => {
    if (!issued) return;
    try {
      await navigator.clipboard.writeText(issued.apiKey);
      setCopied('yes');
    } catch {
      setCopied('failed');
    }
  };
  return (
    <Dialog
      open={!!issued}
      title={`API key for ${monitor}`}
      onClose={() => {
        setCopied(null);
        onClose();
      }}
      footer={
        <Button
          variant="primary"
          onClick={() => {
            setCopied(null);
            onClose();
          }}
        >
          I have stored the key
        </Button>
      }
    >
      <div className="flex flex-col gap-2 text-sm">
        <p className="rounded bg-sand-100 px-2 py-1 text-ink-900">
          <strong>Shown once.</strong> Copy it into the monitor adapter now; it cannot be shown again. Issue a new one if it is lost.
        </p>
        <div className="flex items-center gap-2">
          <code data-testid="api-key" className="flex-1 select-all break-all rounded border border-line bg-paper px-2 py-1 font-mono text-xs">
            {issued?.apiKey}
          </code>
          <Button onClick={copy}>{copied === 'yes' ? 'Copied' : 'Copy'}</Button>
        </div>
        {copied === 'failed' && (
          <p role="alert" className="text-xs text-error">
            The browser refused clipboard access; select the key and copy it by hand.
          </p>
        )}
        <p className="text-xs text-muted">
          Key id {issued?.keyId}. The adapter sends it as <code>Authorization: Bearer …</code>.
        </p>
      </div>
    </Dialog>
  );
}
