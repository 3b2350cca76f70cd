// A long aid (Monte Carlo, sizing, a fit) run as a job in the worker: started, then
// stepped (each step computes about 40 ms in Go) until it finishes. Between
// steps the worker serves other calls, so slider moves stay live, and a
// cancel takes effect at the next step.
import { callAid } from './common.js';

export class Job {
  constructor(engine, startMethod) {
    this.engine = engine;
    this.startMethod = startMethod;
    this.running = false;
    this.cancelAsked = false;
  }

  /**
   * Runs to the end; onProgress(done, total) after every step. Resolves with
   * {state, ms}. args: the start method's argument, or an array of them.
   */
  async run(args, onProgress) {
    this.running = true;
    this.cancelAsked = false;
    const t0 = performance.now();
    try {
      // The run lives in one engine: its steps must not go to the aids'
      // own engine if that starts while the job runs on the page's.
      const engine = typeof this.engine.pin === 'function' ? await this.engine.pin() : this.engine;
      let { result: st } = await callAid(engine, this.startMethod, ...(Array.isArray(args) ? args : [args]));
      while (!st.finished) {
        const method = this.cancelAsked ? 'cancel' : 'step';
        ({ result: st } = await callAid(engine, method, st.run));
        onProgress(st.done, st.total);
      }
      return { state: st, ms: performance.now() - t0 };
    } finally {
      this.running = false;
    }
  }

  cancel() {
    if (this.running) this.cancelAsked = true;
  }
}
