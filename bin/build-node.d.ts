// Types of bin/build-node.js, for the tests that import it.
export declare const STAMP_FILE: string;
export declare function sourceStamp(root?: string): Array<[string, number, number]>;
export declare function isBuildFresh(root?: string, outDir?: string): boolean;
export declare function buildNode(root?: string, outDir?: string): Promise<void>;
