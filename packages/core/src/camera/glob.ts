/**
 * Compile a simple glob to a RegExp: `*` matches within one path segment, `**` across segments, `?` one
 * character, `[abc]` a class; matching is case-insensitive and on `/`-separated paths (backslashes are
 * treated as `/`). A pattern without `/` is matched against the base name only.
 */
export function globToRegExp(pattern: string): RegExp {
  const p = pattern.replace(/\\/g, '/');
  let re = '';
  for (let i = 0; i < p.length; i++) {
    const c = p[i]!;
    if (c === '*') {
      if (p[i + 1] === '*') {
        i++;
        if (p[i + 1] === '/') { i++; re += '(?:.*/)?'; } else re += '.*';
      } else re += '[^/]*';
    } else if (c === '?') re += '[^/]';
    else if (c === '[') {
      const end = p.indexOf(']', i + 1);
      if (end < 0) re += '\\[';
      else { re += `[${p.slice(i + 1, end).replace(/\\/g, '\\\\')}]`; i = end; }
    } else re += c.replace(/[.+^${}()|\\]/g, '\\$&');
  }
  return new RegExp(`^${re}$`, 'i');
}

/**
 * Does `path` match the glob? Patterns with a `/` must match a trailing run of whole segments of the path
 * (so `bias*\/*.fits` matches `/data/night1/bias_0c/b001.fits`); others match the base name.
 * @example globMatch('flats/f01.fits', 'flat*\/*.fits') // true
 */
export function globMatch(path: string, pattern: string): boolean {
  const normal = path.replace(/\\/g, '/');
  const re = globToRegExp(pattern);
  if (!pattern.includes('/')) {
    const base = normal.slice(normal.lastIndexOf('/') + 1);
    return re.test(base);
  }
  if (re.test(normal)) return true;
  const segments = normal.split('/');
  for (let k = 1; k < segments.length; k++) if (re.test(segments.slice(k).join('/'))) return true;
  return false;
}
