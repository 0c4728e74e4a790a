/// <reference lib="webworker" />
/**
 * Browser entry of the engine worker: every message is one request, answered through the shared handler. Typed
 * arrays in results are transferred. Cancellation is by terminating the worker (the pool does it).
 */
import { handleEngineRequest } from '../shared/compute/handle-request';

addEventListener('message', (event: MessageEvent<unknown>) => {
  handleEngineRequest(event.data, (response, transfer) => postMessage(response, transfer));
});
