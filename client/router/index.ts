import { createRouter, createWebHistory, type RouteLocationRaw } from 'vue-router';
import type { Role } from '../../shared/schemas/auth';
import { message } from '../composables/feedback';
import { useSessionStore } from '../stores/session';
import { safeRedirect } from './redirect';

declare module 'vue-router' {
  interface RouteMeta {
    /** Reachable without signing in. */
    public?: boolean;
    /** Only for signed-out people (the sign-in page). */
    guestOnly?: boolean;
    /** Global roles allowed; absent means any signed-in user. */
    roles?: Role[];
    /** Human name used in messages and the document title. */
    title?: string;
  }
}

export const router = createRouter({
  history: createWebHistory(),
  routes: [
    {
      path: '/sign-in',
      name: 'sign-in',
      component: () => import('../pages/SignInPage.vue'),
      meta: { public: true, guestOnly: true, title: 'Sign in' },
    },
    {
      path: '/forgot-password',
      name: 'forgot-password',
      component: () => import('../pages/ForgotPasswordPage.vue'),
      meta: { public: true, guestOnly: true, title: 'Forgot password' },
    },
    {
      // public and not guest-only: a link from a mail may be opened in a browser someone is signed in to
      path: '/set-password',
      name: 'set-password',
      component: () => import('../pages/SetPasswordPage.vue'),
      meta: { public: true, title: 'Choose your password' },
    },
    {
      path: '/',
      component: () => import('../layouts/AppShell.vue'),
      children: [
        { path: '', redirect: { name: 'projects' } },
        {
          path: 'projects',
          name: 'projects',
          component: () => import('../pages/ProjectsPage.vue'),
          meta: { title: 'Projects' },
        },
        {
          path: 'projects/:projectId(\\d+)',
          name: 'project',
          component: () => import('../pages/ProjectPage.vue'),
          props: (route) => ({ projectId: Number(route.params.projectId) }),
          meta: { title: 'Project' },
        },
        {
          path: 'projects/:projectId(\\d+)/buildups',
          name: 'register',
          component: () => import('../pages/RegisterPage.vue'),
          props: (route) => ({ projectId: Number(route.params.projectId) }),
          meta: { title: 'Buildup register', wide: true },
        },
        {
          path: 'sections/:sectionId(\\d+)',
          name: 'section',
          component: () => import('../pages/SectionPage.vue'),
          props: (route) => ({ sectionId: Number(route.params.sectionId) }),
          meta: { title: 'Section', wide: true },
        },
        {
          path: 'sections/:sectionId(\\d+)/interpret',
          name: 'interpret',
          component: () => import('../pages/InterpretPage.vue'),
          props: (route) => ({ sectionId: Number(route.params.sectionId) }),
          meta: { title: 'Interpret', wide: true },
        },
        {
          path: 'library',
          name: 'library',
          component: () => import('../pages/LibraryPage.vue'),
          meta: { title: 'Analogue library' },
        },
        {
          path: 'library/import',
          name: 'library-import',
          component: () => import('../pages/LibraryImportPage.vue'),
          meta: { roles: ['curator', 'admin'], title: 'Import analogues' },
        },
        {
          path: 'library/new',
          name: 'analogue-new',
          component: () => import('../pages/AnalogueNewPage.vue'),
          meta: { roles: ['curator', 'admin'], title: 'Add an analogue' },
        },
        {
          path: 'library/lists',
          name: 'library-lists',
          component: () => import('../pages/LibraryListsPage.vue'),
          meta: { title: 'Tag lists' },
        },
        {
          path: 'library/look-alikes',
          name: 'look-alikes',
          component: () => import('../pages/LookAlikesPage.vue'),
          meta: { title: 'Look-alikes' },
        },
        {
          path: 'library/:analogueId(\\d+)',
          name: 'analogue',
          component: () => import('../pages/AnalogueDetailPage.vue'),
          props: (route) => ({ analogueId: Number(route.params.analogueId) }),
          meta: { title: 'Analogue' },
        },
        {
          path: 'admin/users',
          name: 'admin-users',
          component: () => import('../pages/AdminUsersPage.vue'),
          meta: { roles: ['admin'], title: 'Users' },
        },
        {
          path: 'admin/outbox',
          name: 'admin-outbox',
          component: () => import('../pages/AdminOutboxPage.vue'),
          meta: { roles: ['admin'], title: 'Outbox' },
        },
        {
          path: 'account',
          name: 'account',
          component: () => import('../pages/AccountPage.vue'),
          meta: { title: 'Account settings' },
        },
        {
          path: 'api-reference',
          name: 'api-reference',
          component: () => import('../pages/ApiReferencePage.vue'),
          meta: { title: 'API reference' },
        },
      ],
    },
    {
      // outside the app shell: a printable page of its own (signed-in only)
      path: '/buildups/:buildupId(\\d+)/report',
      name: 'buildup-report',
      component: () => import('../pages/BuildupReportPage.vue'),
      props: (route) => ({ buildupId: Number(route.params.buildupId) }),
      meta: { title: 'Buildup report' },
    },
    {
      path: '/:pathMatch(.*)*',
      name: 'not-found',
      component: () => import('../pages/NotFoundPage.vue'),
      meta: { public: true, title: 'Not found' },
    },
  ],
});

router.beforeEach((to): RouteLocationRaw | true => {
  const session = useSessionStore();
  if (to.meta.guestOnly && session.isSignedIn) {
    return safeRedirect(to.query.redirect) ?? { name: 'projects' };
  }
  if (!to.meta.public && !session.isSignedIn) {
    return { name: 'sign-in', query: to.fullPath === '/' ? {} : { redirect: to.fullPath } };
  }
  const roles = to.matched.flatMap((r) => r.meta.roles ?? []);
  if (roles.length > 0 && !session.hasRole(...roles)) {
    message.warning(`${to.meta.title ?? 'That page'} is only open to ${roles.join(' or ')} accounts.`);
    return { name: 'projects' };
  }
  return true;
});

router.afterEach((to) => {
  document.title = to.meta.title ? `${to.meta.title} · Cayline` : 'Cayline';
});
