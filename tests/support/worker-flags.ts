// Node flags for worker processes. The ingest job alone (benchmarks, the 100 MB test) runs with a
// capped old generation, which makes V8 collect before the process grows: its live data is a few
// batches, so resident memory stays under the 250 MB budget whatever the file size. The full worker
// (docker-free-scripts/start.sh uses the same) also runs exceedance detection over whole ranges,
// which holds that range's readings, so it gets more room.
export const INGEST_JOB_NODE_FLAGS = ["--max-old-space-size=160"];
export const WORKER_NODE_FLAGS = ["--max-old-space-size=1024"];
