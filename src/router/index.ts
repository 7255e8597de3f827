/**
 * Routes, lazy-loaded views and the two guards: signed out → sign-in (with a way back), and a role that may not
 * do the route's `meta.requires` action in any of the person's labs → Forbidden. The server enforces the same
 * permissions; these guards only spare people pages they cannot use.
 */
import { createRouter, createWebHistory, type RouteRecordRaw, type Router, type RouterHistory } from 'vue-router'
import { PERMISSIONS, type LabAction } from '@shared/auth/permissions'
import { useSessionStore } from '@/stores/session'

declare module 'vue-router' {
  interface RouteMeta {
    /** Shown in the browser tab. */
    title?: string
    /** Reachable without signing in. */
    public?: boolean
    /** The action the person's role must allow in at least one lab. */
    requires?: LabAction
  }
}

export type RouteName =
  | 'sign-in'
  | 'accept-invitation'
  | 'reset-password'
  | 'unlock-account'
  | 'overview'
  | 'projects'
  | 'project-detail'
  | 'project-progress'
  | 'samples'
  | 'sample-detail'
  | 'images'
  | 'image-upload'
  | 'image-detail'
  | 'image-motion'
  | 'workspace'
  | 'stack-run'
  | 'queue'
  | 'compare'
  | 'review'
  | 'analysis-review'
  | 'sample-report'
  | 'api-tokens'
  | 'lab-admin'
  | 'deleted-items'
  | 'mailbox'
  | 'forbidden'
  | 'not-found'

type NamedRoute = RouteRecordRaw & { name: RouteName }

const shellRoutes: NamedRoute[] = [
  { path: '', name: 'overview', component: () => import('@/views/OverviewView.vue'), meta: { title: 'Overview' } },
  { path: 'projects', name: 'projects', component: () => import('@/views/ProjectsView.vue'), meta: { title: 'Projects' } },
  {
    path: 'projects/:projectId(\\d+)',
    name: 'project-detail',
    component: () => import('@/views/ProjectDetailView.vue'),
    props: (route) => ({ projectId: Number(route.params.projectId) }),
    meta: { title: 'Project' },
  },
  {
    path: 'projects/:projectId(\\d+)/progress',
    name: 'project-progress',
    component: () => import('@/views/ProjectProgressView.vue'),
    props: (route) => ({ projectId: Number(route.params.projectId) }),
    meta: { title: 'Annotation progress', requires: 'image.assign' },
  },
  { path: 'samples', name: 'samples', component: () => import('@/views/SamplesView.vue'), meta: { title: 'Samples' } },
  {
    path: 'samples/:sampleId(\\d+)',
    name: 'sample-detail',
    component: () => import('@/views/SampleDetailView.vue'),
    props: (route) => ({ sampleId: Number(route.params.sampleId) }),
    meta: { title: 'Sample' },
  },
  {
    path: 'samples/:sampleId(\\d+)/report',
    name: 'sample-report',
    component: () => import('@/views/SampleReportView.vue'),
    props: (route) => ({ sampleId: Number(route.params.sampleId), includeDrafts: route.query.drafts === 'true' }),
    meta: { title: 'Sample report', requires: 'export.tables' },
  },
  { path: 'images', name: 'images', component: () => import('@/views/ImagesView.vue'), meta: { title: 'Images' } },
  {
    path: 'images/upload',
    name: 'image-upload',
    component: () => import('@/views/ImageUploadView.vue'),
    meta: { title: 'Upload images', requires: 'image.upload' },
  },
  {
    path: 'images/:imageId(\\d+)',
    name: 'image-detail',
    component: () => import('@/views/ImageDetailView.vue'),
    props: (route) => ({ imageId: Number(route.params.imageId) }),
    meta: { title: 'Image' },
  },
  {
    path: 'images/:imageId(\\d+)/motion',
    name: 'image-motion',
    component: () => import('@/views/MotionView.vue'),
    props: (route) => ({ imageId: Number(route.params.imageId) }),
    meta: { title: 'Wall motion' },
  },
  {
    path: 'frames/:frameId(\\d+)/workspace',
    name: 'workspace',
    component: () => import('@/views/WorkspaceView.vue'),
    props: (route) => ({ frameId: Number(route.params.frameId), imageId: /^\d+$/.test(String(route.query.image ?? '')) ? Number(route.query.image) : null }),
    meta: { title: 'Annotation workspace', requires: 'lab.read' },
  },
  {
    path: 'stack-runs/:runId(\\d+)',
    name: 'stack-run',
    component: () => import('@/views/StackRunView.vue'),
    props: (route) => ({ runId: Number(route.params.runId) }),
    meta: { title: 'Stack run' },
  },
  { path: 'queue', name: 'queue', component: () => import('@/views/QueueView.vue'), meta: { title: 'My frames', requires: 'mask.edit' } },
  {
    path: 'compare',
    name: 'compare',
    component: () => import('@/views/CompareView.vue'),
    meta: { title: 'Compare', requires: 'comparison.use' },
  },
  {
    path: 'review',
    name: 'review',
    component: () => import('@/views/ReviewView.vue'),
    meta: { title: 'Review', requires: 'analysis.review' },
  },
  {
    path: 'analyses/:analysisId(\\d+)',
    name: 'analysis-review',
    component: () => import('@/views/AnalysisReviewView.vue'),
    props: (route) => ({ analysisId: Number(route.params.analysisId) }),
    meta: { title: 'Analysis review' },
  },
  {
    path: 'lab-admin',
    name: 'lab-admin',
    component: () => import('@/views/LabAdminView.vue'),
    meta: { title: 'Lab admin', requires: 'lab.manage' },
  },
  {
    path: 'deleted-items',
    name: 'deleted-items',
    component: () => import('@/views/DeletedItemsView.vue'),
    meta: { title: 'Deleted items', requires: 'deleted.restore' },
  },
  { path: 'settings/tokens', name: 'api-tokens', component: () => import('@/views/ApiTokensView.vue'), meta: { title: 'API tokens' } },
  { path: 'dev/mailbox', name: 'mailbox', component: () => import('@/views/MailboxView.vue'), meta: { title: 'Mailbox (dev)' } },
  { path: 'forbidden', name: 'forbidden', component: () => import('@/views/ForbiddenView.vue'), meta: { title: 'Not allowed' } },
  { path: ':pathMatch(.*)*', name: 'not-found', component: () => import('@/views/NotFoundView.vue'), meta: { title: 'Not found' } },
]

export const routes: RouteRecordRaw[] = [
  {
    path: '/sign-in',
    name: 'sign-in',
    component: () => import('@/views/SignInView.vue'),
    meta: { title: 'Sign in', public: true },
  } satisfies NamedRoute,
  // The links the server e-mails (…?token=…): they work signed out, and signed in as someone else.
  {
    path: '/accept-invitation',
    name: 'accept-invitation',
    component: () => import('@/views/AcceptInvitationView.vue'),
    props: (route) => ({ token: typeof route.query.token === 'string' ? route.query.token : '' }),
    meta: { title: 'Join a lab', public: true },
  } satisfies NamedRoute,
  {
    path: '/reset-password',
    name: 'reset-password',
    component: () => import('@/views/ResetPasswordView.vue'),
    props: (route) => ({ token: typeof route.query.token === 'string' ? route.query.token : '' }),
    meta: { title: 'Reset password', public: true },
  } satisfies NamedRoute,
  {
    path: '/unlock-account',
    name: 'unlock-account',
    component: () => import('@/views/UnlockAccountView.vue'),
    props: (route) => ({ token: typeof route.query.token === 'string' ? route.query.token : '' }),
    meta: { title: 'Unlock account', public: true },
  } satisfies NamedRoute,
  { path: '/', component: () => import('@/components/AppShell.vue'), children: shellRoutes },
]

/** A `redirect` query value we may navigate to: an in-app path only, never another site (`//evil.example`). */
export function safeRedirect(value: unknown): string | null {
  return typeof value === 'string' && value.startsWith('/') && !value.startsWith('//') ? value : null
}

/** True for a query value naming an action of the permissions table. */
export function isLabAction(value: unknown): value is LabAction {
  return typeof value === 'string' && Object.hasOwn(PERMISSIONS, value)
}

/** Build the router with its guards; tests pass a memory history. */
export function createAppRouter(history: RouterHistory = createWebHistory(import.meta.env.BASE_URL)): Router {
  const router = createRouter({ history, routes, scrollBehavior: () => ({ top: 0 }) })

  router.beforeEach(async (to) => {
    const session = useSessionStore()
    await session.restore()

    if (to.meta.public) {
      if (to.name === 'sign-in' && session.isSignedIn) return safeRedirect(to.query.redirect) ?? { name: 'overview' }
      return true
    }
    if (!session.isSignedIn) {
      return { name: 'sign-in', query: to.fullPath === '/' ? {} : { redirect: to.fullPath } }
    }
    const required = to.meta.requires
    if (required && !session.can(required)) {
      return { name: 'forbidden', query: { action: required, from: to.fullPath } }
    }
    return true
  })

  router.afterEach((to) => {
    document.title = to.meta.title ? `${to.meta.title} · Remanence` : 'Remanence'
  })

  return router
}
