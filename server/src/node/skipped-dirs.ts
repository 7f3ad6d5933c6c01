/**
 * Folders a workspace walk never enters: tool and environment folders (node_modules, virtual
 * environments, caches, version control) and any folder whose name starts with a dot. Shared by
 * the walk (load.ts `collect`) and the language server, which ignores file events below them so a
 * package installed into `.venv` is not checked because its files were created.
 */
export const SKIPPED_DIRS: ReadonlySet<string> = new Set(['node_modules', '.git', '.hg', '.svn', '__pycache__', '.venv', 'venv', '.cache', '.mypy_cache']);

/** Whether a walk enters a folder of this name. */
export function walkedDir(name: string, skip: ReadonlySet<string> = SKIPPED_DIRS): boolean {
  return !skip.has(name) && !name.startsWith('.');
}
