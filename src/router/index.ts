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
    path: '/verify/:number?',
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
    // Children of one record, so the Learn nav link stays lit while a lesson is open.
    path: '/learn',
    meta: { roles: areaRoles('learn') },
    children: [
      { path: '', name: 'learn', component: () => import('../views/learn/CoursesView.vue'), meta: { title: 'Learn' } },
      {
        path: ':lessonId',
        name: 'lesson',
        component: () => import('../views/learn/LessonView.vue'),
        props: true,
        meta: { title: 'Lesson' },
      },
    ],
  },
  {
    // Children of one record, so the Drills nav link stays lit while a drill runs.
    path: '/drills',
    meta: { roles: areaRoles('drills') },
    children: [
      { path: '', name: 'drills', component: () => import('../views/drills/DrillsView.vue'), meta: { title: 'Drills' } },
      { path: ':drillId', name: 'drill-runner', component: () => import('../views/drills/DrillRunnerView.vue'), props: true, meta: { title: 'Drill' } },
    ],
  },
  {
    path: '/exams',
    meta: { roles: areaRoles('exams') },
    children: [
      { path: '', name: 'exams', component: () => import('../views/exams/ExamsView.vue'), meta: { title: 'Exams' } },
      { path: ':attemptId', name: 'exam-runner', component: () => import('../views/exams/ExamRunnerView.vue'), props: true, meta: { title: 'Exam' } },
    ],
  },
  {
    path: '/progress',
    name: 'progress',
    component: () => import('../views/progress/ProgressView.vue'),
    // Reached from Drills and Exams (the header has no room for another link); the same roles.
    meta: { roles: areaRoles('drills'), title: 'Progress' },
  },
  {
    path: '/operate/drills',
    name: 'operate-drills',
    component: () => import('../views/operate-drills/OperateDrillsView.vue'),
    meta: { roles: areaRoles('operate-drills'), title: 'Drill preview' },
  },
  {
    path: '/calculators',
    name: 'calculators',
    component: () => import('../views/calculators/CalculatorsIndexView.vue'),
    meta: { roles: areaRoles('calculators'), title: 'Calculators' },
  },
  {
    path: '/calculators/:id',
    name: 'calculator',
    component: () => import('../views/calculators/CalculatorView.vue'),
    props: true,
    meta: { roles: areaRoles('calculators'), title: 'Calculator' },
  },
  {
    path: '/crew',
    meta: { roles: areaRoles('crew') },
    children: [
      { path: '', name: 'crew', component: () => import('../views/crew/ReadinessView.vue'), meta: { title: 'Crew readiness' } },
      { path: 'job-check', name: 'crew-job-check', component: () => import('../views/crew/JobCheckView.vue'), meta: { title: 'Job check' } },
      { path: 'assignments', name: 'crew-assignments', component: () => import('../views/crew/AssignmentsView.vue'), meta: { title: 'Refresher assignments' } },
    ],
  },
  {
    path: '/company',
    name: 'company',
    component: () => import('../views/company/CompanyView.vue'),
    meta: { roles: areaRoles('company'), title: 'Company' },
  },
  {
    path: '/company/billing',
    name: 'company-billing',
    component: () => import('../views/billing/BillingView.vue'),
    meta: { roles: areaRoles('company-billing'), title: 'Seats and billing' },
  },
  {
    path: '/billing/return',
    name: 'billing-return',
    component: () => import('../views/billing/BillingReturnView.vue'),
    meta: { roles: areaRoles('company-billing'), title: 'Setting up your seats' },
  },
  {
    path: '/billing/cancelled',
    name: 'billing-cancelled',
    component: () => import('../views/billing/BillingCancelledView.vue'),
    meta: { public: true, title: 'Payment not completed' },
  },
  {
    path: '/signup',
    name: 'signup',
    component: () => import('../views/signup/SignupView.vue'),
    meta: { public: true, title: 'Set up your company' },
  },
  {
    path: '/invitations/:token',
    name: 'accept-invitation',
    component: () => import('../views/invitations/AcceptInvitationView.vue'),
    props: true,
    meta: { public: true, title: 'Accept your invitation' },
  },
  {
    path: '/audit',
    component: () => import('../views/audit/AuditLayout.vue'),
    meta: { roles: areaRoles('audit') },
    children: [
      { path: '', name: 'audit', component: () => import('../views/audit/AuditCheckView.vue'), meta: { title: 'Check a certificate number' } },
      { path: 'batch', name: 'audit-batch', component: () => import('../views/audit/AuditBatchView.vue'), meta: { title: 'Batch check' } },
      { path: 'file', name: 'audit-file', component: () => import('../views/audit/AuditFileView.vue'), meta: { title: 'PDF authenticity' } },
      { path: 'evidence/:number?', name: 'audit-evidence', component: () => import('../views/audit/AuditEvidenceView.vue'), meta: { title: 'Exam evidence' } },
      { path: 'lookups', name: 'audit-lookups', component: () => import('../views/audit/AuditLookupsView.vue'), meta: { title: 'My lookups' } },
    ],
  },
  {
    path: '/certificates',
    name: 'certificates',
    component: () => import('../views/certificates/CertificatesView.vue'),
    meta: { roles: areaRoles('certificates'), title: 'My certificates' },
  },
  {
    path: '/company/auditors',
    name: 'company-auditors',
    component: () => import('../views/company-auditors/CompanyAuditorsView.vue'),
    meta: { roles: areaRoles('company-auditors'), title: 'Auditor access' },
  },
  {
    path: '/operate/certificates',
    name: 'operate-certificates',
    component: () => import('../views/operate-certificates/OperateCertificatesView.vue'),
    meta: { roles: areaRoles('operate-certificates'), title: 'Certificates' },
  },
  {
    path: '/operate',
    meta: { roles: areaRoles('operate') },
    children: [
      { path: '', name: 'operate', component: () => import('../views/areas/OperateView.vue'), meta: { title: 'Operate' } },
      {
        path: 'content',
        name: 'operate-content',
        component: () => import('../views/operate/ContentSettingsView.vue'),
        meta: { title: 'Courses and exam blueprints' },
      },
      { path: 'emails', name: 'operate-emails', component: () => import('../views/operate-emails/EmailLogView.vue'), meta: { title: 'E-mail log' } },
      {
        path: 'companies',
        name: 'operate-companies',
        component: () => import('../views/operate-companies/OperateCompaniesView.vue'),
        meta: { title: 'Companies and seats' },
      },
      { path: 'webhooks', name: 'operate-webhooks', component: () => import('../views/operate-webhooks/WebhookLogView.vue'), meta: { title: 'Payment webhooks' } },
    ],
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
