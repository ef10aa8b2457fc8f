// The Node flags the worker runs with (docker-free-scripts/start.sh uses the same). A capped old
// generation makes V8 collect garbage before the process grows: the ingest job's live data is a few
// batches, so its resident memory stays well under the 250 MB budget whatever the file size.
export const WORKER_NODE_FLAGS = ["--max-old-space-size=160"];
