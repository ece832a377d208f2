import type { Permission } from '@/lib/authorization';

export interface NavItem {
  to: string;
  label: string;
  permission: Permission;
}
export interface NavGroup {
  label: string;
  items: NavItem[];
}

/** Side navigation, grouped by what the person is there to do. */
export const NAV: NavGroup[] = [
  {
    label: 'Watch',
    items: [
      { to: '/board', label: 'Beds board', permission: 'board' },
      { to: '/overview', label: 'Overview', permission: 'overview' },
      { to: '/assessments', label: 'Assessments', permission: 'assessments' },
    ],
  },
  {
    label: 'Connect',
    items: [
      { to: '/monitors', label: 'Monitors', permission: 'devices' },
      { to: '/profiles', label: 'Monitor profiles', permission: 'devices' },
      { to: '/beds', label: 'Beds', permission: 'devices' },
      { to: '/test-bench', label: 'Test bench', permission: 'testBench' },
      { to: '/reanalyse', label: 'Reanalyse', permission: 'reanalyse' },
    ],
  },
  {
    label: 'Deliver',
    items: [
      { to: '/deliveries', label: 'Deliveries', permission: 'deliveries' },
      { to: '/inbound', label: 'Inbound & quarantine', permission: 'inbound' },
    ],
  },
  {
    label: 'Administer',
    items: [
      { to: '/users', label: 'Users & roles', permission: 'users' },
      { to: '/audit', label: 'Audit log', permission: 'audit' },
      { to: '/settings', label: 'Settings', permission: 'settings' },
    ],
  },
];
