/** The renderer's one way to the service: Electron's preload bridge when present, else HTTP + SSE. */
import { createHttpClient, type LoopwiseDoor } from '../../../electron/web-client.ts';

export function connect(win: {
  loopwise?: LoopwiseDoor;
  location: { search: string; origin: string; pathname?: string; hash?: string };
  history?: { replaceState(data: unknown, unused: string, url?: string): void };
}): LoopwiseDoor {
  if (win.loopwise) return win.loopwise;
  // Browser mode: the server traded the address's token for an HttpOnly cookie the page's requests
  // carry. Should an address still show the token, it leaves the address bar and history here.
  const params = new URLSearchParams(win.location.search);
  if (params.has('token') && win.history) {
    params.delete('token');
    const rest = params.toString();
    win.history.replaceState(
      null,
      '',
      `${win.location.pathname ?? '/'}${rest ? `?${rest}` : ''}${win.location.hash ?? ''}`,
    );
  }
  return createHttpClient({ base: '' });
}
