/**
 * A full garbage collection on the calling thread, when the runtime lets one be exposed (V8's
 * `--expose-gc`, set at run time); otherwise nothing. For the moments memory is known to have
 * become garbage in bulk: the raw bytes of large files once their tensors are built (load.ts),
 * and views of shared memory the language-server thread dropped for deleted files — shared
 * memory is released only once every thread that saw it has collected its views.
 */
import * as v8 from 'node:v8';
import * as vm from 'node:vm';

let gc: (() => void) | null | undefined;

export function collectGarbage(): void {
  if (gc === undefined) {
    try {
      v8.setFlagsFromString('--expose-gc');
      gc = vm.runInNewContext('gc') as () => void;
    } catch {
      gc = null;
    }
  }
  gc?.();
}
