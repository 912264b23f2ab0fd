import type { Plugin } from 'vite';
export declare function policyFor(scripts: string[], styles: string[]): string;
export declare function inlineBodies(html: string): { scripts: string[]; styles: string[] };
export declare function contentSecurityPolicy(): Plugin;
