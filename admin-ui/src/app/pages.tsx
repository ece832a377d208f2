// Screens that combine features: the app composes them, features never import each other.
import { DeliveriesRoute } from '@/features/deliveries/routes/deliveries';
import { SettingsRoute } from '@/features/settings/routes/settings';
import { DestinationsPanel } from '@/features/destinations/components/destinations-panel';

export function DeliveriesPage() {
  return <DeliveriesRoute destinations={<DestinationsPanel />} />;
}

export function SettingsPage() {
  return <SettingsRoute destinations={<DestinationsPanel />} />;
}
