import type { Plugin } from 'vite';
export declare const EMBEDDED_MARK: string;
export declare function stripOrtWasmReference(code: string, id: string): string;
export declare function ortWasmEmbedded(): Plugin;
