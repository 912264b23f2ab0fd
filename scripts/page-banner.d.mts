export const CAUTION: string;
export function startBanner(url: string, fileUrl: string): string[];
