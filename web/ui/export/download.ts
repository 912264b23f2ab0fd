// Saving a file from the page: a Blob handed to the browser's download (no network involved).

/** A file name made of safe characters, with the extension. */
export function fileName(base: string, ext: string): string {
  const safe = base.normalize('NFKD').replace(/[^\w.-]+/g, '-').replace(/-+/g, '-').replace(/^-|-$/g, '').slice(0, 80) || 'rimfill';
  return `${safe}.${ext}`;
}

/** Offers `data` as a download named `name`. */
export function saveFile(data: BlobPart, name: string, type: string): void {
  const url = URL.createObjectURL(new Blob([data], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.rel = 'noopener';
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 60_000);
}
