// axe-core in the browser tests: loads Deque's axe-core once (served from node_modules; it is not
// an ES module) and runs it on an element.
export interface AxeResult {
  violations: { id: string; impact: string | null; nodes: { target: unknown }[] }[];
}
export interface AxeLike {
  run(context: Element, options: object): Promise<AxeResult>;
}

/** The page's axe-core, loaded by a script tag on first use. */
export async function loadAxe(): Promise<AxeLike> {
  const w = window as unknown as { axe?: AxeLike };
  if (!w.axe) {
    await new Promise<void>((resolve, reject) => {
      const s = document.createElement('script');
      s.src = '/node_modules/axe-core/axe.min.js';
      s.onload = () => resolve();
      s.onerror = () => reject(new Error('axe-core did not load'));
      document.head.append(s);
    });
  }
  if (!w.axe) throw new Error('axe-core loaded but window.axe is missing');
  return w.axe;
}
