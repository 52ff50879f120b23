import './validation-config';
import { createApp } from 'vue';
import { createPinia } from 'pinia';
import PrimeVue from 'primevue/config';
import '@fontsource/open-sans/400.css';
import '@fontsource/open-sans/600.css';
import '@fontsource/open-sans/700.css';
import 'primeicons/primeicons.css';
import './theme/base.css';
import App from './App.vue';
import { onUnauthorized } from './api/client';
import { installNavigationState } from './composables/useNavigationState';
import { applyInitialColorScheme } from './composables/useColorScheme';
import { router } from './router';
import { useSessionStore } from './stores/session';
import { DARK_CLASS, PlumewrightPreset } from './theme/preset';

applyInitialColorScheme();

const app = createApp(App);
const pinia = createPinia();
app.use(pinia);
app.use(PrimeVue, {
  theme: {
    preset: PlumewrightPreset,
    options: {
      darkModeSelector: `.${DARK_CLASS}`,
      // Layered so our own unlayered rules win without !important.
      cssLayer: { name: 'primevue', order: 'primevue' },
    },
  },
});
installNavigationState(router);
app.use(router);

// A 401 outside the auth endpoints means the session ended (expired, or signed out elsewhere).
onUnauthorized((path) => {
  if (path.startsWith('/api/auth/')) return;
  const session = useSessionStore(pinia);
  if (!session.isSignedIn) return;
  session.markSignedOut();
  const here = router.currentRoute.value;
  if (!here.meta.public) void router.replace({ name: 'sign-in', query: { next: here.fullPath, expired: '1' } });
});

app.mount('#app');
