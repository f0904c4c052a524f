// Output file names from the recipe's template. Names never contain path separators and never
// collide, not even by letter case alone (helpers unpack bundles on case-insensitive disks).
export type SinglesFormat = 'png' | 'tiff' | 'jpeg';

export const FORMAT_EXT: Record<SinglesFormat, string> = { png: 'png', tiff: 'tif', jpeg: 'jpg' };

const IMAGE_EXT = /\.(png|tiff?|jpe?g|webp)$/i;
// Characters that are not allowed (or not safe) in file names on common desktop systems.
// eslint-disable-next-line no-control-regex
const UNSAFE = /[<>:"/\\|?*\u0000-\u001f]/g;
const RESERVED = /^(con|prn|aux|nul|com[1-9]|lpt[1-9])$/i;

export type NameTokens = {
  /** Source file name without folder or extension. */
  name: string;
  /** Deck position, 1-based. */
  seq: number;
  copy: number;
  /** Folder of the source inside the art set ("" at the root). */
  folder: string;
  ext: string;
};

export function stemOf(path: string): string {
  const base = path.split('/').pop() ?? path;
  const dot = base.lastIndexOf('.');
  return dot > 0 ? base.slice(0, dot) : base;
}

export function folderOf(path: string): string {
  const parts = path.split('/');
  return parts.slice(0, -1).join('-');
}

/** Fills the template and makes the result a safe single file name with the right extension. */
export function renderName(template: string, tokens: NameTokens): string {
  const filled = template.replace(/\{(name|seq|copy|folder|ext)(?::(\d{1,2}))?\}/g, (_all, token: string, width?: string) => {
    const value = token === 'seq' ? tokens.seq : token === 'copy' ? tokens.copy : tokens[token as 'name' | 'folder' | 'ext'];
    const text = String(value);
    return width && typeof value === 'number' ? text.padStart(Number(width), '0') : text;
  });
  let safe = filled.replace(UNSAFE, '_').replace(/^[.\s]+/, '').replace(/[.\s]+$/, '');
  // The file must carry the extension of the format it really is.
  safe = safe.replace(IMAGE_EXT, '');
  if (safe === '' || RESERVED.test(safe)) safe = `card-${tokens.seq}${safe ? `-${safe}` : ''}`;
  return `${safe}.${tokens.ext}`;
}

/**
 * Makes every name unique ignoring letter case and Unicode form (macOS disks store decomposed names,
 * so "café" typed two ways is one file there) by appending -2, -3, ... before the extension.
 */
export function uniqueNames(names: readonly string[]): string[] {
  const taken = new Set<string>();
  const fold = (name: string) => name.normalize('NFC').toLowerCase();
  return names.map((name) => {
    const dot = name.lastIndexOf('.');
    const stem = dot > 0 ? name.slice(0, dot) : name;
    const ext = dot > 0 ? name.slice(dot) : '';
    let candidate = name;
    for (let n = 2; taken.has(fold(candidate)); n++) candidate = `${stem}-${n}${ext}`;
    taken.add(fold(candidate));
    return candidate;
  });
}

/** URL- and file-safe slug of a recipe name, for the combined PDF's file name. */
export function slugify(text: string): string {
  const slug = text
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 80);
  return slug || 'cards';
}
