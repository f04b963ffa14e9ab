import '@fontsource/ibm-plex-sans/400.css';
import '@fontsource/ibm-plex-sans/500.css';
import '@fontsource/ibm-plex-sans/600.css';
import './assets/base.css';

import { VueQueryPlugin } from '@tanstack/vue-query';
import { createPinia } from 'pinia';
import { createApp } from 'vue';
import App from './App.vue';
import { configureAuth } from './api/http';
import { queryClient } from './api/queryClient';
import { message } from './composables/feedback';
import { router } from './router';
import { useSessionStore } from './stores/session';
import { installCssVariables } from './theme';

installCssVariables();

const app = createApp(App);
const pinia = createPinia();
app.use(pinia);

const session = useSessionStore(pinia);

configureAuth({
  getToken: () => session.token,
  onUnauthorized: () => {
    if (!session.isSignedIn) return;
    session.clear();
    const current = router.currentRoute.value;
    if (current.name !== 'sign-in') {
      void router.push({ name: 'sign-in', query: { redirect: current.fullPath, reason: 'expired' } });
    }
  },
});

app.use(router);
app.use(VueQueryPlugin, { queryClient });
app.mount('#app');

// Pick up role or name changes made since the session was stored; a dead token signs out via onUnauthorized.
if (session.isSignedIn) void session.refreshUser().catch(() => {});
