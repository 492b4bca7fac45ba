/**
 * The renderer's bootstrap in browser mode (renderer/src/lib/door.ts): the page needs no token of
 * its own (its requests carry the HttpOnly cookie), and an address that still shows the token is
 * cleaned from the address bar and history with history.replaceState.
 */
import { describe, expect, it } from 'vitest';
import { connect } from '../../renderer/src/lib/door.ts';

function fakeWindow(search: string) {
  const replaced: string[] = [];
  return {
    replaced,
    win: {
      location: { search, origin: 'http://127.0.0.1:5000', pathname: '/', hash: '#groups' },
      history: { replaceState: (_d: unknown, _u: string, url?: string) => replaced.push(url ?? '') },
    },
  };
}

describe('connect', () => {
  it('removes the token from the address, keeping the rest of it', () => {
    const { win, replaced } = fakeWindow('?token=abc&view=x');
    const door = connect(win);
    expect(typeof door.openCohort).toBe('function');
    expect(replaced).toEqual(['/?view=x#groups']);
  });

  it('leaves a clean address alone', () => {
    const { win, replaced } = fakeWindow('');
    connect(win);
    expect(replaced).toEqual([]);
  });
});
