export declare const root: string;
export declare const distDir: string;
export declare function buildIsFresh(): boolean;
export declare function ensureBuild(options?: { quiet?: boolean }): void;
