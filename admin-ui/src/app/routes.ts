import { lazyNamed, type AppRoute } from './lazy';

// Each feature's screens load on first visit, so the plot library only ships to those who plot.
export const routes: AppRoute[] = [
  // The first screen: the beds board for reviewers and operators, the overview for admins and integrators.
  { path: '/', permission: 'overview', component: lazyNamed(() => import('./home'), 'HomePage') },
  { path: '/overview', permission: 'overview', component: lazyNamed(() => import('@/features/overview/routes/overview'), 'OverviewRoute') },
  { path: '/board', permission: 'board', component: lazyNamed(() => import('@/features/board/routes/board'), 'BoardRoute') },
  { path: '/board/beds/:bedId', permission: 'board', component: lazyNamed(() => import('@/features/board/routes/bed-trend'), 'BedTrendRoute') },
  { path: '/users', permission: 'users', component: lazyNamed(() => import('@/features/users/routes/users'), 'UsersRoute') },
  { path: '/audit', permission: 'audit', component: lazyNamed(() => import('@/features/audit/routes/audit'), 'AuditRoute') },
  { path: '/reanalyse', permission: 'reanalyse', component: lazyNamed(() => import('@/features/reanalyse/routes/reanalyse'), 'ReanalyseRoute') },
  { path: '/test-bench', permission: 'testBench', component: lazyNamed(() => import('@/features/test-bench/routes/test-bench'), 'TestBenchRoute') },
  { path: '/assessments', permission: 'assessments', component: lazyNamed(() => import('@/features/assessments/routes/assessments'), 'AssessmentsRoute') },
  {
    path: '/assessments/:id',
    permission: 'assessments',
    component: lazyNamed(() => import('@/features/assessments/routes/assessment-detail'), 'AssessmentDetailRoute'),
  },
  { path: '/monitors', permission: 'devices', component: lazyNamed(() => import('@/features/devices/routes/monitors'), 'MonitorsRoute') },
  { path: '/profiles', permission: 'devices', component: lazyNamed(() => import('@/features/devices/routes/profiles'), 'ProfilesRoute') },
  { path: '/profiles/:id', permission: 'devices', component: lazyNamed(() => import('@/features/devices/routes/profile-edit'), 'ProfileEditRoute') },
  { path: '/beds', permission: 'devices', component: lazyNamed(() => import('@/features/devices/routes/beds'), 'BedsRoute') },
  { path: '/deliveries', permission: 'deliveries', component: lazyNamed(() => import('./pages'), 'DeliveriesPage') },
  { path: '/inbound', permission: 'inbound', component: lazyNamed(() => import('@/features/inbound/routes/inbound'), 'InboundRoute') },
  { path: '/settings', permission: 'settings', component: lazyNamed(() => import('./pages'), 'SettingsPage') },
];
