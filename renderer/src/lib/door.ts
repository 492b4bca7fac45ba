/** The renderer's one way to the service: Electron's preload bridge when present, else HTTP + SSE. */
import { createHttpClient, type LoopwiseDoor } from '../../../electron/web-client.ts';

export function connect(win: {
  loopwise?: LoopwiseDoor;
  location: { search: string; origin: string };
}): LoopwiseDoor {
  if (win.loopwise) return win.loopwise;
  const token = new URLSearchParams(win.location.search).get('token');
  if (!token) {
    throw new Error('This page needs the address printed by `npm start` (it carries the session token).');
  }
  return createHttpClient({ base: '', token });
}
