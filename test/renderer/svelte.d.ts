// Lets the project's tsc (which does not compile .svelte files; svelte-check does) type the
// renderer's components as Svelte components and know the runes used in .svelte.ts modules.
// eslint-disable-next-line @typescript-eslint/triple-slash-reference -- the runes are ambient declarations, not exports
/// <reference types="svelte" />
declare module '*.svelte' {
  import type { Component } from 'svelte';
  const component: Component<Record<string, unknown>>;
  export default component;
}
