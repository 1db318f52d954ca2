import { createRouter, createWebHistory, type RouteLocationNormalized, type RouteLocationRaw, type RouteRecordRaw } from 'vue-router'
import type { Role } from '@shared/types/roles'
import { useSessionStore } from '@/stores/session'
import { RUN_PATH, SIGN_IN_PATH } from './paths'

export type RouteName =
  | 'sign-in'
  | 'today'
  | 'projects'
  | 'project'
  | 'equipment'
  | 'people'
  | 'templates'
  | 'template'
  | 'template-editor'
  | 'template-diff'
  | 'account'
  | 'run'
  | 'run-review'
  | 'outbox'
  | 'archive'
  | 'verify'
  | 'verify-number'
  | 'not-found'

declare module 'vue-router' {
  interface RouteMeta {
    /** Reachable without signing in. */
    public?: boolean
    /** Roles allowed; absent means every signed-in role. */
    roles?: Role[]
    title?: string
    /** Opens from this device's copy when the server cannot be reached (the runner keeps working offline). */
    offline?: boolean
  }
}

type NamedRoute = RouteRecordRaw & { name: RouteName }

/** The signed-in frame (navigation, the user menu and its dropdown), a chunk of its own: sign-in and Verify do without it. */
export const loadAppShell = () => import('@/components/AppShell.vue')

const routes: NamedRoute[] = [
  { path: SIGN_IN_PATH, name: 'sign-in', component: () => import('@/views/SignInView.vue'), meta: { public: true, title: 'Sign in' } },
  { path: '/', name: 'today', component: () => import('@/views/TodayView.vue'), meta: { roles: ['technician'], title: 'Today' } },
  { path: '/projects', name: 'projects', component: () => import('@/views/ProjectsView.vue'), meta: { title: 'Projects' } },
  { path: '/projects/:projectId', name: 'project', component: () => import('@/views/ProjectView.vue'), meta: { title: 'Project' }, props: true },
  { path: '/equipment/:equipmentId', name: 'equipment', component: () => import('@/views/EquipmentView.vue'), meta: { title: 'Equipment' }, props: true },
  { path: '/templates', name: 'templates', component: () => import('@/views/TemplatesView.vue'), meta: { roles: ['admin'], title: 'Templates' } },
  { path: '/templates/:templateId', name: 'template', component: () => import('@/views/TemplateView.vue'), meta: { roles: ['admin'], title: 'Template' }, props: true },
  {
    path: '/templates/:templateId/versions/:number/edit',
    name: 'template-editor',
    component: () => import('@/views/TemplateEditorView.vue'),
    meta: { roles: ['admin'], title: 'Template editor' },
    props: true,
  },
  {
    path: '/templates/:templateId/diff',
    name: 'template-diff',
    component: () => import('@/views/TemplateDiffView.vue'),
    meta: { roles: ['admin'], title: 'Compare versions' },
    props: (route) => ({ templateId: route.params.templateId, from: route.query.from, to: route.query.to }),
  },
  { path: '/people', name: 'people', component: () => import('@/views/PeopleView.vue'), meta: { roles: ['admin'], title: 'People' } },
  { path: RUN_PATH, name: 'run', component: () => import('@/views/RunView.vue'), meta: { title: 'Run', offline: true }, props: true },
  { path: '/runs/:runId/review', name: 'run-review', component: () => import('@/views/RunReviewView.vue'), meta: { title: 'Review' }, props: true },
  { path: '/archive', name: 'archive', component: () => import('@/views/ArchiveView.vue'), meta: { title: 'Archive' } },
  { path: '/outbox', name: 'outbox', component: () => import('@/views/OutboxView.vue'), meta: { roles: ['admin'], title: 'Outbox' } },
  { path: '/verify', name: 'verify', component: () => import('@/views/VerifyView.vue'), meta: { public: true, title: 'Check a report' } },
  { path: '/verify/:reportNumber', name: 'verify-number', component: () => import('@/views/VerifyView.vue'), meta: { public: true, title: 'Check a report' }, props: true },
  { path: '/account', name: 'account', component: () => import('@/views/AccountView.vue'), meta: { title: 'Account' } },
  { path: '/:pathMatch(.*)*', name: 'not-found', component: () => import('@/views/NotFoundView.vue'), meta: { title: 'Not found' } },
]

/** Where each role starts after signing in. */
export function landingFor(role: Role): { name: RouteName } {
  return role === 'technician' ? { name: 'today' } : { name: 'projects' }
}

export function to(name: RouteName, params?: Record<string, string>): RouteLocationRaw {
  return { name, params }
}

const router = createRouter({ history: createWebHistory(), routes })

/** Starts fetching the chunks of a route's view (the router's own import later finds the module already loaded). */
function preloadView(target: RouteLocationNormalized) {
  for (const record of target.matched) {
    for (const component of Object.values(record.components ?? {})) {
      // vue-router's own test for a lazy route component: a function that is not itself a component.
      const lazy = typeof component === 'function' && !('displayName' in component || 'props' in component || '__vccOpts' in component)
      if (lazy) void (component as () => Promise<unknown>)().catch(() => undefined)
    }
  }
}

router.beforeEach(async (target) => {
  const session = useSessionStore()
  // The router would fetch the view only after GET /api/session answers, one more round trip on a slow link. A public
  // page opens whoever asks; a signed-in page most likely opens when someone signed in here before (or still is), and
  // then needs the app's frame too.
  if (target.meta.public) preloadView(target)
  else if (session.user ?? session.deviceUser) {
    void loadAppShell().catch(() => undefined)
    preloadView(target)
  }
  try {
    await session.ensureLoaded()
  } catch (err) {
    // No answer at all (a reload in a plant room without signal): the runner opens from this device's copy and its
    // queued changes wait; the server still checks the sign-in on every change it receives.
    if (target.meta.offline) return true
    throw err
  }
  if (target.meta.public) {
    if (target.name === 'sign-in' && session.user) return landingFor(session.user.role)
    return true
  }
  if (!session.user) return { name: 'sign-in', query: target.fullPath !== '/' ? { redirect: target.fullPath } : {} }
  if (target.meta.roles && !target.meta.roles.includes(session.user.role)) return landingFor(session.user.role)
  return true
})

router.afterEach((route) => {
  document.title = route.meta.title ? `${route.meta.title} · Startproof` : 'Startproof'
})

export default router
