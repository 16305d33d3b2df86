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
      { path: '', name: 'home', redirect: () => ({ name: 'jobs.list' }) },
      { path: 'jobs', name: 'jobs.list', component: () => import('@/views/jobs/JobListView.vue'), meta: { title: 'Jobs' } },
      { path: 'people', name: 'people.list', component: () => import('@/views/people/PeopleView.vue'), meta: { roles: ['owner'], title: 'People' } },
      { path: 'account', name: 'account', component: () => import('@/views/account/AccountView.vue'), meta: { title: 'My account' } },
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
