/**
 * The worker-thread entry of the session pool (loaded by piscina from the compiled dist/ tree):
 * one task is one session, or a group of sessions calibrated together (batch.pool); see
 * session-task.ts.
 */
import { runPoolTask, runSessionTask, type PoolTask, type SessionOutcome, type SessionTask } from './session-task.js';

export default function run(task: SessionTask | PoolTask): Promise<SessionOutcome | SessionOutcome[]> {
  return 'tasks' in task ? runPoolTask(task) : runSessionTask(task);
}
