import { mount } from 'svelte';
import App from './App.svelte';
import './app.css';
import { connect } from './lib/door.ts';
import { Session } from './lib/session.svelte.ts';

const target = document.getElementById('app') as HTMLElement;
try {
  // sessionStorage: a reload of this tab keeps its choices; another tab starts afresh.
  const session = new Session(
    connect(window as unknown as Parameters<typeof connect>[0]),
    window.sessionStorage,
  );
  mount(App, { target, props: { session } });
  void session.init();
} catch (e) {
  target.textContent = e instanceof Error ? e.message : String(e);
}
