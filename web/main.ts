// The page's composition root: starts the engine's workers and hands the facade to the app.
import { startBrowserEngine } from './worker/browser-workers';
import { EngineClient } from './worker/client';
import type { AppShell } from './ui/app-shell';
import './ui/app-shell';

const app = document.querySelector<AppShell>('rf-app')!;
app.client = new EngineClient(startBrowserEngine);
