/**
 * The key the analyses keep a graph by: a file's path, or graph g of the dataset of many graphs in
 * that file (the path, a NUL, "graph" and g: no path holds a NUL). The language server makes keys
 * from the panel's requests (lsp/analysis.ts); the worker reads them back (dataset-views.ts).
 * Kept apart so the language server's bundle does not pull in the readers.
 */
const SEP = '\u0000graph ';

export function graphKey(file: string, graph: number | undefined): string {
  return graph === undefined ? file : `${file}${SEP}${graph}`;
}

/** The file and graph of a key made by graphKey. */
export function parseGraphKey(key: string): { file: string; graph?: number } {
  const i = key.indexOf(SEP);
  if (i < 0) return { file: key };
  return { file: key.slice(0, i), graph: Number(key.slice(i + SEP.length)) };
}
