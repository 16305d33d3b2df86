import { createRouter, createWebHistory, type RouteRecordRaw } from 'vue-router';
import type { Role } from '@shared/roles';
import { useSessionStore } from '@/stores/session';

declare module 'vue-router' {
  interface RouteMeta {
    /** Roles that may open the page; absent = any signed-in user. */
    roles?: Role[];
    public?: boolean;
    title?: string;
  }
}

const routes: RouteRecordRaw[] = [
  { path: '/sign-in', name: 'sign-in', component: () => import('@/views/SignInView.vue'), meta: { public: true, title: 'Sign in' } },
  {
    path: '/',
    component: () => import('@/components/AppShell.vue'),
    children: [
      // A customer's home is their own repairs page; staff start at the shop's job list.
      { path: '', name: 'home', redirect: () => ({ name: useSessionStore().role === 'customer' ? 'my.repairs' : 'jobs.list' }) },
      { path: 'jobs', name: 'jobs.list', component: () => import('@/views/jobs/JobListView.vue'), meta: { roles: ['owner', 'technician', 'front_desk'], title: 'Jobs' } },
      { path: 'jobs/new', name: 'jobs.new', component: () => import('@/views/jobs/JobIntakeView.vue'), meta: { roles: ['owner', 'front_desk'], title: 'Book in' } },
      { path: 'jobs/:id(\\d+)', name: 'jobs.detail', component: () => import('@/views/jobs/JobDetailView.vue'), props: (r) => ({ id: Number(r.params.id) }), meta: { title: 'Job' } },
      {
        path: 'jobs/:id(\\d+)/measurements',
        name: 'jobs.measurements',
        component: () => import('@/views/measurements/JobMeasurementsView.vue'),
        props: (r) => ({ id: Number(r.params.id) }),
        meta: { roles: ['owner', 'technician', 'front_desk'], title: 'Measurements' },
      },
      {
        path: 'jobs/:id(\\d+)/compare',
        name: 'jobs.compare',
        component: () => import('@/views/measurements/CompareView.vue'),
        props: (r) => ({ id: Number(r.params.id) }),
        meta: { roles: ['owner', 'technician', 'front_desk'], title: 'Before and after' },
      },
      { path: 'calibrations', name: 'calibrations.list', component: () => import('@/views/measurements/CalibrationsView.vue'), meta: { roles: ['owner', 'technician'], title: 'Calibration' } },
      {
        path: 'customers/:id(\\d+)',
        name: 'customers.detail',
        component: () => import('@/views/customers/CustomerDetailView.vue'),
        props: (r) => ({ id: Number(r.params.id) }),
        meta: { roles: ['owner', 'front_desk', 'technician'], title: 'Customer' },
      },
      { path: 'spec-sheets', name: 'specs.list', component: () => import('@/views/specs/SpecSheetListView.vue'), meta: { roles: ['owner', 'technician', 'front_desk'], title: 'Spec sheets' } },
      { path: 'spec-sheets/new', name: 'specs.new', component: () => import('@/views/specs/SpecSheetEditView.vue'), meta: { roles: ['owner', 'technician'], title: 'New spec sheet' } },
      {
        path: 'spec-sheets/:id(\\d+)',
        name: 'specs.edit',
        component: () => import('@/views/specs/SpecSheetEditView.vue'),
        props: (r) => ({ id: Number(r.params.id) }),
        meta: { roles: ['owner', 'technician', 'front_desk'], title: 'Spec sheet' },
      },
      { path: 'live', name: 'live.bench', component: () => import('@/views/live/LiveBenchView.vue'), meta: { roles: ['owner', 'technician'], title: 'Live bench' } },
      { path: 'test-signals', name: 'live.signals', component: () => import('@/views/live/TestSignalsView.vue'), meta: { roles: ['owner', 'technician'], title: 'Test signals' } },
      { path: 'people', name: 'people.list', component: () => import('@/views/people/PeopleView.vue'), meta: { roles: ['owner'], title: 'People' } },
      { path: 'search', name: 'search', component: () => import('@/views/search/SearchView.vue'), meta: { title: 'Search' } },
      { path: 'account', name: 'account', component: () => import('@/views/account/AccountView.vue'), meta: { title: 'My account' } },
      { path: 'invoices', name: 'invoices.list', component: () => import('@/views/billing/InvoiceListView.vue'), meta: { roles: ['owner', 'front_desk'], title: 'Invoices' } },
      { path: 'invoices/:id(\\d+)', name: 'invoices.detail', component: () => import('@/views/billing/InvoiceDetailView.vue'), props: (r) => ({ id: Number(r.params.id) }), meta: { roles: ['owner', 'front_desk'], title: 'Invoice' } },
      { path: 'billing/jobs/:id(\\d+)', name: 'billing.job', component: () => import('@/views/billing/JobBillingView.vue'), props: (r) => ({ id: Number(r.params.id) }), meta: { roles: ['owner', 'front_desk'], title: 'Job billing' } },
      { path: 'outbox', name: 'outbox', component: () => import('@/views/billing/OutboxView.vue'), meta: { roles: ['owner', 'front_desk'], title: 'Outbox' } },
      { path: 'settings', name: 'settings.shop', component: () => import('@/views/billing/ShopSettingsView.vue'), meta: { roles: ['owner'], title: 'Shop settings' } },
      { path: 'my/repairs', name: 'my.repairs', component: () => import('@/views/portal/MyRepairsView.vue'), meta: { roles: ['customer'], title: 'My repairs' } },
      { path: 'my/repairs/:id(\\d+)', name: 'my.repair', component: () => import('@/views/portal/MyRepairView.vue'), props: (r) => ({ id: Number(r.params.id) }), meta: { roles: ['customer'], title: 'My repair' } },
      {
        path: 'customers',
        name: 'customers.list',
        component: () => import('@/views/customers/CustomerListView.vue'),
        meta: { roles: ['owner', 'front_desk', 'technician'], title: 'Customers' },
      },
    ],
  },
  { path: '/:pathMatch(.*)*', name: 'not-found', component: () => import('@/views/NotFoundView.vue'), meta: { public: true } },
];

export const router = createRouter({ history: createWebHistory(), routes });

router.beforeEach(async (to) => {
  const session = useSessionStore();
  if (!session.loaded) await session.load();
  if (to.meta.public) return to.name === 'sign-in' && session.user ? { name: 'home' } : true;
  if (!session.user) return { name: 'sign-in', query: to.fullPath !== '/' ? { next: to.fullPath } : {} };
  if (to.meta.roles && !session.hasRole(...to.meta.roles)) return { name: 'home' };
  return true;
});

router.afterEach((to) => {
  document.title = to.meta.title ? `${to.meta.title} · Quietpath` : 'Quietpath';
});
