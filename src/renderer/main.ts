// Entry of the page. In the desktop window the preload bridge has put the API on window.seamscout;
// served by the local browser host, the page makes its own client over HTTP.
import type { SeamscoutApi } from '../common/api.js';
import { mountApp } from './app.js';
import { createBrowserClient } from './browser-client.js';

const root = document.getElementById('app');
if (root) {
  try {
    const api = (window as unknown as { seamscout?: SeamscoutApi }).seamscout ?? createBrowserClient();
    mountApp(root, api);
  } catch (e) {
    const p = document.createElement('p');
    p.className = 'message message-error';
    p.textContent = `Seamscout could not connect to its host: ${e instanceof Error ? e.message : String(e)}`;
    root.replaceChildren(p);
  }
}
