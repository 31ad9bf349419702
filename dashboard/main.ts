// Dashboard entry: styles, the link to the agent, the app.
import 'uplot/dist/uPlot.min.css';
import './styles.css';
import { App } from './app.ts';
import { Link, agentSocketUrl } from './connection.ts';

// Forms hold controls only: Enter in a field must not reload the page.
for (const f of Array.from(document.forms)) f.addEventListener('submit', (e) => e.preventDefault());

const linkState = document.getElementById('link-state')!;
let app: App | null = null;
const link = new Link(agentSocketUrl(location), {
  json: (m) => app?.onJson(m),
  binary: (b) => app?.onBinary(b),
  state: (s, closed) => {
    if (closed) document.body.dataset.lastClose = `${closed.code} ${closed.reason}`.trim();
    const why = closed?.reason ? `closed by the agent: ${closed.reason} — retrying` : 'agent unreachable — retrying';
    linkState.textContent = s === 'up' ? 'connected' : s === 'down' ? why : 'connecting…';
    linkState.className = `link-state ${s}`;
    document.body.dataset.link = s;
  },
});
app = new App(link);
// A handle for tests and the benchmark (same inputs as the socket).
(window as unknown as { floorline: App }).floorline = app;
link.connect();
