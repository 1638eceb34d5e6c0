// Types of scripts/cli-build.mjs for the tests and the benchmark.
export declare const ROOT: string;
export declare function cliStamp(root?: string): string;
export declare function cliEntry(stamp: string): string;
export declare function buildCli(stamp?: string, opts?: { force?: boolean }): Promise<string>;
