import { createApp } from 'vue'
import { createPinia } from 'pinia'
import '@fontsource/source-sans-3/400.css'
import '@fontsource/source-sans-3/600.css'
import '@fontsource/source-sans-3/700.css'
import 'element-plus/theme-chalk/base.css'
import 'element-plus/es/components/message/style/css'
import 'element-plus/es/components/message-box/style/css'
import './styles/theme.css'
import './styles/base.css'
import App from './App.vue'
import router, { loadAppShell } from './router'
import { onUnauthenticated } from './api/http'
import { useSessionStore } from './stores/session'

const app = createApp(App)
app.use(createPinia())
app.use(router)

// A sign-in that ended elsewhere (signed out on another device, deactivated, expired) sends the person back
// to sign-in, returning afterwards to the page they were on.
onUnauthenticated(() => {
  useSessionStore().clear()
  const current = router.currentRoute.value
  if (!current.meta.public) void router.replace({ name: 'sign-in', query: { redirect: current.fullPath } })
})
// The loading screen in index.html stays until the first page can be drawn whole: its view (the router waits for it)
// and, for a signed-in page, the app's frame, which is a chunk of its own and already on its way (router/index.ts).
router.isReady().then(async () => {
  if (!router.currentRoute.value.meta.public) await loadAppShell().catch(() => undefined)
  app.mount('#app')
})
