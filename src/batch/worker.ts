/**
 * The worker-thread entry of the session pool (loaded by piscina from the compiled dist/ tree):
 * one task is one session, see session-task.ts.
 */
import { runSessionTask } from './session-task.js';

export default runSessionTask;
