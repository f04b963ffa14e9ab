/**
 * Bench harness: the interpretation canvas assembled the way the interpret
 * page will (SectionStage + InterpretationLayer + ToolBar + shortcuts), over
 * a real server's section and buildups. Query: ?section=<id>&token=<jwt>&user=<json>&overlay=0|1
 */
import '@fontsource/ibm-plex-sans/400.css';
import '@fontsource/ibm-plex-sans/600.css';
import { createPinia } from 'pinia';
import { createApp } from 'vue';
import { configureAuth } from '../../../client/api/http';
import Harness from './Harness.vue';

const q = new URLSearchParams(location.search);
const token = q.get('token');
// The image loader reads the session store, which reads this key.
if (token) localStorage.setItem('cayline.session', JSON.stringify({ token, expiresAt: null, user: JSON.parse(q.get('user') ?? 'null') }));
configureAuth({ getToken: () => token, onUnauthorized: () => {} });
createApp(Harness).use(createPinia()).mount('#app');
