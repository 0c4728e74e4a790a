/**
 * Node worker_threads entry of the engine worker (server and CLI): every message is one request, answered through
 * the shared handler; typed arrays in results are transferred.
 */
import { parentPort } from 'node:worker_threads';
import { handleEngineRequest } from '../../shared/compute/handle-request';

const port = parentPort;
if (!port) throw new Error('engine-thread must run as a worker thread');
port.on('message', (message: unknown) => {
  handleEngineRequest(message, (response, transfer) => port.postMessage(response, transfer));
});
