// The part of jsdom's API the report test uses (jsdom ships no types; the renderer tests use it
// through vitest's environment instead).
declare module 'jsdom' {
  export class JSDOM {
    constructor(html: string);
    readonly window: { document: Document };
  }
}
