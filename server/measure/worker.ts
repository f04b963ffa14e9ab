/** Worker-thread side of the measurement pool (see pool.ts): one task in, one reply out. */
import { runMeasureTask, type MeasureTask, type MeasureReply } from './task';

export default function measureWorker(task: MeasureTask): MeasureReply {
  return runMeasureTask(task);
}
