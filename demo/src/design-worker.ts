/**
 * The design panel's worker: runs designAndEvaluate off the page's main thread. In: a design
 * request; out: the network and its evaluations, or the error's message and code.
 */
import { type DesignRequest, designAndEvaluate } from './design-job.js';

addEventListener('message', (e: MessageEvent<DesignRequest>) => {
  postMessage(designAndEvaluate(e.data));
});
