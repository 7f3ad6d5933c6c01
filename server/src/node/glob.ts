/**
 * Glob patterns as VS Code writes them in `files.exclude` and `hopscope.exclude`: `**`, `*`, `?`,
 * `{a,b}`, `[abc]`. Matched against workspace-relative paths with forward slashes. A pattern
 * without a slash also matches at any depth (`*.tmp` matches `a/b/c.tmp`), as in `files.exclude`.
 */
export function globToRegExp(glob: string): RegExp {
  let g = glob.trim().replace(/\\/g, '/');
  if (g.startsWith('./')) g = g.slice(2);
  if (!g.includes('/')) g = `**/${g}`;
  let re = '';
  for (let i = 0; i < g.length; i++) {
    const c = g[i]!;
    if (c === '*') {
      if (g[i + 1] === '*') {
        // '**/' matches zero or more folders; a trailing '**' matches everything below.
        if (g[i + 2] === '/') { re += '(?:.*/)?'; i += 2; } else { re += '.*'; i += 1; }
      } else re += '[^/]*';
    } else if (c === '?') re += '[^/]';
    else if (c === '{') {
      const end = g.indexOf('}', i);
      if (end < 0) { re += '\\{'; continue; }
      re += '(?:' + g.slice(i + 1, end).split(',').map(escape).join('|') + ')';
      i = end;
    } else if (c === '[') {
      const end = g.indexOf(']', i);
      if (end < 0) { re += '\\['; continue; }
      re += '[' + g.slice(i + 1, end).replace(/^!/, '^').replace(/\\/g, '\\\\') + ']';
      i = end;
    } else re += escape(c);
  }
  // A folder pattern excludes everything inside it too.
  return new RegExp(`^${re}(?:/.*)?$`);
}

function escape(s: string): string {
  return s.replace(/[.+^${}()|[\]\\*?]/g, '\\$&');
}

/** A predicate over workspace-relative paths from several patterns. */
export function globMatcher(patterns: string[]): (relPath: string) => boolean {
  const res = patterns.filter((p) => p.trim()).map(globToRegExp);
  return (rel) => res.some((r) => r.test(rel.replace(/\\/g, '/')));
}
