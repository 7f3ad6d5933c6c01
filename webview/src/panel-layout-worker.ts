/**
 * Layout worker of the receptive-field panel: { id, input } in, { id, positions, rings } out
 * (positions transferred, not copied). Bundled on its own as dist/webview/panel-layout.js.
 */
import { layoutField, type LayoutInput } from './panel-layout';

const ctx = self as unknown as { onmessage: ((e: MessageEvent<{ id: number; input: LayoutInput }>) => void) | null; postMessage(m: unknown, transfer?: Transferable[]): void };

ctx.onmessage = (e) => {
  const { id, input } = e.data;
  try {
    const { positions, rings } = layoutField(input);
    ctx.postMessage({ id, positions, rings }, [positions.buffer]);
  } catch (err) {
    ctx.postMessage({ id, error: String((err as Error)?.message ?? err) });
  }
};
