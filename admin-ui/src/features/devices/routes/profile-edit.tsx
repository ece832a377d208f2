import { Link, useNavigate, useParams } from 'react-router-dom';
import { useAuth } from '@/lib/auth';
import { PageHeader, Panel } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { useToast } from '@/components/ui/toast';
import { useProfile, useSaveProfile } from '../api/devices';
import { ProfileForm } from '../components/profile-form';
import { EdgeCredentialsSection } from '../components/edge-credentials-section';

export function ProfileEditRoute() {
  const { id } = useParams();
  const isNew = !id || id === 'new';
  const profile = useProfile(isNew ? undefined : id);
  const save = useSaveProfile(isNew ? undefined : id);
  const navigate = useNavigate();
  const toast = useToast();
  const { can } = useAuth();

  if (!isNew && profile.isPending) return <LoadingState />;
  if (!isNew && profile.error) return <ErrorState error={profile.error} onRetry={() => profile.refetch()} />;

  return (
    <>
      <p className="mb-1 text-xs">
        <Link to="/profiles" className="text-ink-700 underline">
          ← Monitor profiles
        </Link>
      </p>
      <PageHeader
        title={isNew ? 'New monitor profile' : `Profile ${profile.data?.name ?? ''}`}
        description="Channel codes, roles, units, scaling, rates, and what the monitor itself does to the signal."
      />
      <Panel>
        {can('manageDevices') ? (
          <ProfileForm
            profile={isNew ? undefined : profile.data}
            busy={save.isPending}
            error={save.error}
            onCancel={() => navigate('/profiles')}
            onSubmit={(v) =>
              save.mutate(v, {
                onSuccess: (p) => {
                  toast.success(`Profile ${p.name} saved`);
                  navigate('/profiles');
                },
              })
            }
          />
        ) : (
          <p className="text-sm text-muted">Only integrators can change profiles.</p>
        )}
      </Panel>
      {!isNew && id && can('edgeCredentials') && (
        <Panel title="Device edge" className="mt-3">
          <EdgeCredentialsSection scope="profile" id={id} />
        </Panel>
      )}
    </>
  );
}
