import { createApp } from 'vue'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import 'element-plus/dist/index.css'
import '@fontsource/work-sans/400.css'
import '@fontsource/work-sans/500.css'
import '@fontsource/work-sans/600.css'
import './assets/theme.css'
import App from './App.vue'
import { setUnauthorizedHandler } from './api/http'
import { createAppRouter } from './router'
import { useSessionStore } from './stores/session'

const app = createApp(App)
// Pinia before the router: the router's first navigation runs the guard, which reads the session store.
const pinia = createPinia()
app.use(pinia)
const router = createAppRouter()
app.use(router)
app.use(ElementPlus)

// The session ended on the server (expired, signed out elsewhere): forget it here and come back after signing in.
setUnauthorizedHandler(() => {
  useSessionStore(pinia).clear()
  const current = router.currentRoute.value
  if (current.name !== 'sign-in') void router.push({ name: 'sign-in', query: { redirect: current.fullPath } })
})

app.mount('#app')
