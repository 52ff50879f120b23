import { createRouter, createWebHistory, type RouteLocationNormalized, type RouteRecordRaw } from 'vue-router';
import type { Role } from '../api/auth';
import { useSessionStore } from '../stores/session';
import { areaRoles, canUse } from './areas';

declare module 'vue-router' {
  interface RouteMeta {
    /** Reachable without signing in. */
    public?: boolean;
    /** Signed-in users who hold none of these roles see the "not for your role" page. */
    roles?: Role[];
    /** Shown in the browser tab before " · Plumewright". */
    title?: string;
  }
}

const routes: RouteRecordRaw[] = [
  {
    path: '/sign-in',
    name: 'sign-in',
    component: () => import('../views/auth/SignInView.vue'),
    meta: { public: true, title: 'Sign in' },
  },
  {
    path: '/forgot-password',
    name: 'forgot-password',
    component: () => import('../views/auth/ForgotPasswordView.vue'),
    meta: { public: true, title: 'Reset your password' },
  },
  {
    path: '/reset-password/:token',
    name: 'reset-password',
    component: () => import('../views/auth/ResetPasswordView.vue'),
    props: true,
    meta: { public: true, title: 'Choose a new password' },
  },
  {
    path: '/verify',
    name: 'verify',
    component: () => import('../views/verify/VerifyView.vue'),
    meta: { public: true, title: 'Check a certificate' },
  },
  {
    path: '/',
    name: 'dashboard',
    component: () => import('../views/dashboard/DashboardView.vue'),
    meta: { title: 'Dashboard' },
  },
  {
    path: '/account',
    name: 'account',
    component: () => import('../views/account/AccountView.vue'),
    meta: { title: 'Your account' },
  },
  {
    path: '/learn',
    name: 'learn',
    component: () => import('../views/areas/LearnView.vue'),
    meta: { roles: areaRoles('learn'), title: 'Learn' },
  },
  {
    path: '/calculators',
    name: 'calculators',
    component: () => import('../views/areas/CalculatorsView.vue'),
    meta: { roles: areaRoles('calculators'), title: 'Calculators' },
  },
  {
    path: '/crew',
    name: 'crew',
    component: () => import('../views/areas/CrewView.vue'),
    meta: { roles: areaRoles('crew'), title: 'Crew' },
  },
  {
    path: '/company',
    name: 'company',
    component: () => import('../views/areas/CompanyView.vue'),
    meta: { roles: areaRoles('company'), title: 'Company' },
  },
  {
    path: '/audit',
    name: 'audit',
    component: () => import('../views/areas/AuditView.vue'),
    meta: { roles: areaRoles('audit'), title: 'Audit' },
  },
  {
    path: '/operate',
    name: 'operate',
    component: () => import('../views/areas/OperateView.vue'),
    meta: { roles: areaRoles('operate'), title: 'Operate' },
  },
  {
    path: '/not-for-your-role',
    name: 'role-required',
    component: () => import('../views/errors/RoleRequiredView.vue'),
    meta: { title: 'Not available for your role' },
  },
  {
    path: '/:pathMatch(.*)*',
    name: 'not-found',
    component: () => import('../views/errors/NotFoundView.vue'),
    meta: { public: true, title: 'Page not found' },
  },
];

/** Only same-site paths may be used as a post-sign-in destination, never another origin. */
export function safeNext(value: unknown): string {
  if (typeof value !== 'string' || !value.startsWith('/') || value.startsWith('//') || value.startsWith('/\\')) {
    return '/';
  }
  return value;
}

export const router = createRouter({
  history: createWebHistory(),
  routes,
  scrollBehavior: (to, _from, saved) => saved ?? (to.hash ? { el: to.hash, top: 16 } : { top: 0 }),
});

router.beforeEach(async (to: RouteLocationNormalized) => {
  const session = useSessionStore();
  await session.ensureLoaded();

  if (to.meta.public) {
    if (to.name === 'sign-in' && session.isSignedIn) return safeNext(to.query.next);
    return true;
  }
  if (!session.isSignedIn) {
    return { name: 'sign-in', query: to.fullPath === '/' ? {} : { next: to.fullPath } };
  }
  if (to.meta.roles && !canUse(to.meta.roles, session.roles)) {
    return { name: 'role-required', query: { from: to.fullPath } };
  }
  return true;
});

router.afterEach((to) => {
  document.title = to.meta.title ? `${to.meta.title} · Plumewright` : 'Plumewright';
});
