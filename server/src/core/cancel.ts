/**
 * Cooperative cancellation for long analyses. Any object with `isCancellationRequested` fits: an
 * LSP CancellationToken, a VS Code one, or a plain `{ isCancellationRequested: false }` in the CLI.
 * Analyses look at it between chunks of work (never per element) and throw AnalysisCancelled.
 */
export interface Cancel {
  readonly isCancellationRequested: boolean;
}

export class AnalysisCancelled extends Error {
  override readonly name = 'AnalysisCancelled';
  constructor() {
    super('analysis cancelled');
  }
}

export function throwIfCancelled(cancel: Cancel | undefined): void {
  if (cancel?.isCancellationRequested) throw new AnalysisCancelled();
}
