import type { ReactNode } from 'react';
import { useAuth } from '@/lib/auth';
import { PageHeader, Panel } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { useSaveSiteSettings, useSiteSettings } from '../api/settings';
import { SettingsForm } from '../components/settings-form';

/** `destinations` is the destinations panel, composed in by the app. */
export function SettingsRoute({ destinations }: { destinations?: ReactNode }) {
  const settings = useSiteSettings();
  const save = useSaveSiteSettings();
  const { can } = useAuth();
  const toast = useToast();
  const readOnly = !can('manageSettings');
  return (
    <>
      <PageHeader
        title="Settings"
        description={
          readOnly ? 'Read-only: only administrators change settings.' : 'Changes apply to windows analysed from now on and are recorded in the audit log.'
        }
      />
      <div className="flex flex-col gap-3">
        <Panel>
          {settings.isPending && <LoadingState />}
          {settings.error && <ErrorState error={settings.error} onRetry={() => settings.refetch()} />}
          {settings.data && (
            <SettingsForm
              settings={settings.data}
              readOnly={readOnly}
              busy={save.isPending}
              error={save.error}
              onSubmit={(v) => save.mutate(v, { onSuccess: () => toast.success('Settings saved') })}
            />
          )}
        </Panel>
        {destinations && <Panel title="Destinations">{destinations}</Panel>}
      </div>
    </>
  );
}
