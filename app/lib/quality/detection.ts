// Exceedance detection and sensor checks over one parameter's readings at one site. Pure: arrays
// in, events out; no I/O, no clocks, no time zones (every time is an epoch millisecond in UTC).
//
// Every check returns events { startMs, endMs, peakValue, peakMs, lastMs }:
// - startMs  the first reading that is part of the event;
// - endMs    when the event ended: the first reading back past the clear level (or back in range,
//            or no longer stuck…), or the last reading before a gap that ended it; null when the
//            event was still going on at the last reading given (it is "ongoing");
// - peakValue / peakMs  the most extreme value of the event and when it occurred (what "most
//            extreme" means is said beside each check);
// - lastMs   the last reading that belonged to the event (for the duration of an ongoing one).
//
// Gaps. Readings come from loggers read out on rounds, so data can stop and restart. A gap between
// two readings longer than `maxGapMs` (by default GAP_INTERVALS × the logging interval) ends an
// open event at the last reading before the gap, and a new event may begin after it: nobody knows
// what the water did while nothing was logged, so the event is not stretched across the gap.
// Missing data itself is its own check (detectMissingData).
//
// Edges of the evaluated range. Callers evaluate a window around the readings that changed. An
// event that was already open before the window is passed in as `open`; the window then continues
// it (same startMs, peak carried over) instead of starting a second event at the window's first
// reading. The server widens its windows so that candidates still being timed at the edge (see
// minimum duration) are seen whole.

export type Reading = { timeMs: number; value: number };

export type DetectedEvent = {
  startMs: number;
  endMs: number | null;
  peakValue: number;
  peakMs: number;
  lastMs: number;
};

/** An event known to be open when the evaluated readings begin (from the store). */
export type OpenEvent = { startMs: number; peakValue: number; peakMs: number; lastMs: number };

/**
 * A gap longer than this many logging intervals ends an open event. Four intervals (an hour at the
 * common 15-minute interval) rides over a dropped reading or two without ending an event, but not
 * over a logger that stopped (our choice; common practice for automatic checks is 2–5 intervals).
 */
export const GAP_INTERVALS = 4;

/** When the logging interval is unknown and cannot be estimated: 15 minutes, the most common (common practice). */
export const FALLBACK_INTERVAL_MS = 15 * 60_000;

/** The median step between consecutive readings (ms), or null with fewer than two readings. */
export function medianIntervalMs(readings: readonly Pick<Reading, "timeMs">[]): number | null {
  if (readings.length < 2) return null;
  const steps: number[] = [];
  for (let i = 1; i < readings.length; i++) {
    const d = readings[i].timeMs - readings[i - 1].timeMs;
    if (d > 0) steps.push(d);
  }
  if (!steps.length) return null;
  steps.sort((a, b) => a - b);
  return steps[Math.floor(steps.length / 2)];
}

export function defaultMaxGapMs(intervalMs: number | null | undefined) {
  return GAP_INTERVALS * (intervalMs && intervalMs > 0 ? intervalMs : FALLBACK_INTERVAL_MS);
}

type Common = { maxGapMs: number; open?: OpenEvent | null };

function checkOrder(readings: readonly Reading[]) {
  for (let i = 1; i < readings.length; i++) {
    if (!(readings[i].timeMs > readings[i - 1].timeMs)) {
      throw new RangeError(`Readings must be in strictly increasing time order (index ${i})`);
    }
  }
}

/**
 * A small state machine shared by the "runs" checks (threshold, out of range, rate of change):
 * `inside(i)` says whether reading i keeps an open event going, `starts(i)` whether it can start
 * one, `score(i)` how extreme it is (larger = more extreme) and `peakOf(i)` the value reported.
 */
function runs(
  readings: readonly Reading[],
  opts: Common & {
    starts: (i: number) => boolean;
    keeps: (i: number) => boolean;
    score: (i: number) => number;
    peakOf: (i: number) => number;
    /** Time a candidate must hold (`starts` on every reading) before it becomes an event; 0 = at once. */
    minDurationMs?: number;
    /** The score of an open event's stored peak (so a reading inside the window replaces it only when more extreme). */
    scoreOfPeak: (peakValue: number) => number;
  },
): DetectedEvent[] {
  checkOrder(readings);
  const out: DetectedEvent[] = [];
  const minDuration = opts.minDurationMs ?? 0;
  let event: (DetectedEvent & { score: number }) | null = null;
  let candidate: { startIndex: number; best: number } | null = null;
  // An open event from before the window carries on, with its stored peak on the same scale.
  if (opts.open) {
    const o = opts.open;
    event = { startMs: o.startMs, endMs: null, peakValue: o.peakValue, peakMs: o.peakMs, lastMs: o.lastMs, score: opts.scoreOfPeak(o.peakValue) };
  }
  let prevMs = opts.open ? opts.open.lastMs : null;

  const close = (endMs: number) => {
    if (!event) return;
    const { score: _score, ...rest } = event;
    out.push({ ...rest, endMs });
    event = null;
  };

  for (let i = 0; i < readings.length; i++) {
    const t = readings[i].timeMs;
    const gap = prevMs !== null && t - prevMs > opts.maxGapMs;
    if (gap) {
      if (event) close(event.lastMs);
      candidate = null;
    }
    prevMs = t;

    if (event) {
      if (opts.keeps(i)) {
        const s = opts.score(i);
        if (s > event.score) {
          event.score = s;
          event.peakValue = opts.peakOf(i);
          event.peakMs = t;
        }
        event.lastMs = t;
        continue;
      }
      close(t);
      // The reading that ended the event cannot also start one (it is past the clear level).
      continue;
    }

    if (!opts.starts(i)) {
      candidate = null;
      continue;
    }
    if (!candidate) candidate = { startIndex: i, best: i };
    else if (opts.score(i) > opts.score(candidate.best)) candidate.best = i;
    const startMs = readings[candidate.startIndex].timeMs;
    if (t - startMs >= minDuration) {
      const b = candidate.best;
      event = { startMs, endMs: null, peakValue: opts.peakOf(b), peakMs: readings[b].timeMs, lastMs: t, score: opts.score(b) };
      candidate = null;
    }
  }
  if (event) {
    const { score: _score, ...rest } = event as DetectedEvent & { score: number };
    out.push({ ...rest, endMs: null });
  }
  return out;
}

// ---- Threshold with minimum duration and clear level (hysteresis) ----------------------------

export type ThresholdCondition = {
  /** "above": event while value > threshold; "below": while value < threshold. */
  direction: "above" | "below";
  threshold: number;
  /**
   * The level the value must return past to end the event: ≤ threshold for "above" (the event
   * ends at the first reading ≤ clear), ≥ threshold for "below". Equal to the threshold = no hysteresis.
   */
  clear: number;
  /** The value must stay beyond the threshold on every reading for at least this long (first to latest reading) before an event is raised; 0 = at once. */
  minDurationMs: number;
};

export function checkThresholdCondition(c: ThresholdCondition) {
  if (!Number.isFinite(c.threshold) || !Number.isFinite(c.clear)) throw new RangeError("Threshold and clear level must be numbers");
  if (c.direction === "above" && c.clear > c.threshold) throw new RangeError("For an upper threshold the clear level must be at or below the threshold");
  if (c.direction === "below" && c.clear < c.threshold) throw new RangeError("For a lower threshold the clear level must be at or above the threshold");
  if (!(c.minDurationMs >= 0)) throw new RangeError("The minimum duration cannot be negative");
}

/**
 * Above (or below) a threshold, held for at least a minimum duration, ending only when the value
 * returns past the clear level. A candidate that falls back to or past the threshold before the
 * minimum duration has passed is dropped. Once raised, readings between the threshold and the clear
 * level keep the event open. Peak: the highest value (above) or the lowest (below).
 */
export function detectThreshold(readings: readonly Reading[], c: ThresholdCondition, opts: Common): DetectedEvent[] {
  checkThresholdCondition(c);
  const up = c.direction === "above";
  const v = (i: number) => readings[i].value;
  return runs(readings, {
    ...opts,
    minDurationMs: c.minDurationMs,
    starts: (i) => (up ? v(i) > c.threshold : v(i) < c.threshold),
    keeps: (i) => (up ? v(i) > c.clear : v(i) < c.clear),
    score: (i) => (up ? v(i) : -v(i)),
    scoreOfPeak: (p) => (up ? p : -p),
    peakOf: v,
  });
}

// ---- Outside a range (sensor range; temperature range of a compensation method) --------------

export type RangeCondition = { min: number; max: number };

/**
 * Readings outside [min, max]: an event for each run of them, ending at the first reading back in
 * range. Peak: the reading farthest outside (by distance from the nearer limit); its own value is
 * reported.
 */
export function detectOutOfRange(readings: readonly Reading[], c: RangeCondition, opts: Common): DetectedEvent[] {
  if (!(c.min < c.max)) throw new RangeError("The lower limit must be below the upper limit");
  const v = (i: number) => readings[i].value;
  const outside = (i: number) => v(i) < c.min || v(i) > c.max;
  const distance = (x: number) => (x < c.min ? c.min - x : x > c.max ? x - c.max : 0);
  return runs(readings, { ...opts, starts: outside, keeps: outside, score: (i) => distance(v(i)), scoreOfPeak: distance, peakOf: v });
}

// ---- Rate of change ---------------------------------------------------------------------------

export type RateCondition = {
  /** The change that must be exceeded within the window, in the parameter's unit (> 0). */
  change: number;
  windowMs: number;
  direction: "rise" | "fall" | "either";
};

/**
 * The largest rise and fall reaching each reading within the window before it: rise = value −
 * lowest value in [t − window, t), fall = highest value in that span − value (never below 0). Sliding minimum and
 * maximum with monotonic queues (each reading enters and leaves each queue once).
 */
export function windowChanges(readings: readonly Reading[], windowMs: number) {
  const n = readings.length;
  const rise = new Float64Array(n);
  const fall = new Float64Array(n);
  const minQ: number[] = [];
  const maxQ: number[] = [];
  let minHead = 0;
  let maxHead = 0;
  for (let i = 0; i < n; i++) {
    const t = readings[i].timeMs;
    while (minHead < minQ.length && readings[minQ[minHead]].timeMs < t - windowMs) minHead++;
    while (maxHead < maxQ.length && readings[maxQ[maxHead]].timeMs < t - windowMs) maxHead++;
    const v = readings[i].value;
    rise[i] = minHead < minQ.length ? Math.max(0, v - readings[minQ[minHead]].value) : 0;
    fall[i] = maxHead < maxQ.length ? Math.max(0, readings[maxQ[maxHead]].value - v) : 0;
    while (minQ.length > minHead && readings[minQ[minQ.length - 1]].value >= v) minQ.pop();
    minQ.push(i);
    while (maxQ.length > maxHead && readings[maxQ[maxQ.length - 1]].value <= v) maxQ.pop();
    maxQ.push(i);
  }
  return { rise, fall };
}

/**
 * A change larger than `change` within `windowMs` (a salt pulse arriving, a storm diluting). An
 * event starts at the first reading reached by such a change and lasts until a whole window has
 * passed without one: its endMs is the first reading a full window after the last such reading (so
 * a pulse whose rate hovers around the limit is one event, not a flicker of small ones). Peak: the
 * largest change (in the parameter's unit per window; a fall is reported as a negative number) and
 * the reading it reached.
 */
export function detectRateOfChange(readings: readonly Reading[], c: RateCondition, opts: Common): DetectedEvent[] {
  if (!(c.change > 0)) throw new RangeError("The change must be greater than zero");
  if (!(c.windowMs > 0)) throw new RangeError("The window must be longer than zero");
  const { rise, fall } = windowChanges(readings, c.windowMs);
  const amount = (i: number) => (c.direction === "rise" ? rise[i] : c.direction === "fall" ? fall[i] : Math.max(rise[i], fall[i]));
  const signed = (i: number) => (c.direction === "fall" || (c.direction === "either" && fall[i] > rise[i]) ? -fall[i] : rise[i]);
  const hit = (i: number) => amount(i) > c.change;
  // runs() asks starts() for each reading while no event is open and keeps() while one is, in order.
  let lastHitMs = opts.open ? opts.open.lastMs : -Infinity;
  const starts = (i: number) => {
    if (!hit(i)) return false;
    lastHitMs = readings[i].timeMs;
    return true;
  };
  const keeps = (i: number) => {
    if (hit(i)) {
      lastHitMs = readings[i].timeMs;
      return true;
    }
    return readings[i].timeMs - lastHitMs < c.windowMs;
  };
  return runs(readings, { ...opts, starts, keeps, score: amount, scoreOfPeak: Math.abs, peakOf: signed });
}

// ---- Flat line --------------------------------------------------------------------------------

export type FlatLineCondition = {
  /** At least this many consecutive readings (≥ 2) … */
  readings: number;
  /** … within this much of the run's first value (0 = identical values). */
  tolerance: number;
};

/**
 * A stuck sensor: `readings` or more consecutive readings all within `tolerance` of the run's first
 * value, with no gap between them. The event starts at the run's first reading and ends at the
 * first reading that differs (or at the last reading before a gap). Peak: the stuck value.
 */
export function detectFlatLine(readings: readonly Reading[], c: FlatLineCondition, opts: Common): DetectedEvent[] {
  if (!(Number.isInteger(c.readings) && c.readings >= 2)) throw new RangeError("A flat line needs at least 2 readings");
  if (!(c.tolerance >= 0)) throw new RangeError("The tolerance cannot be negative");
  checkOrder(readings);
  const out: DetectedEvent[] = [];
  type Run = { startMs: number; base: number; peakMs: number; count: number; lastMs: number };
  // An open event carried in is a run already long enough; its stuck value is its stored peak.
  let run: Run | null = opts.open
    ? { startMs: opts.open.startMs, base: opts.open.peakValue, peakMs: opts.open.peakMs, count: Infinity, lastMs: opts.open.lastMs }
    : null;
  const flush = (endMs: number | null) => {
    if (run && run.count >= c.readings) out.push({ startMs: run.startMs, endMs, peakValue: run.base, peakMs: run.peakMs, lastMs: run.lastMs });
  };
  for (const r of readings) {
    if (run && r.timeMs - run.lastMs > opts.maxGapMs) {
      flush(run.lastMs);
      run = null;
    }
    if (run && Math.abs(r.value - run.base) <= c.tolerance) {
      run.count++;
      run.lastMs = r.timeMs;
      continue;
    }
    flush(r.timeMs);
    run = { startMs: r.timeMs, base: r.value, peakMs: r.timeMs, count: 1, lastMs: r.timeMs };
  }
  flush(null);
  return out;
}

// ---- Spike ------------------------------------------------------------------------------------

export type SpikeCondition = {
  /** A reading is a spike when it differs from both neighbours by more than this, in the same direction. */
  jump: number;
};

/**
 * One reading far from both neighbours: v − previous and v − next have the same sign and both
 * exceed `jump` in size; both neighbours must be within the gap limit. The first and last readings
 * cannot be judged (one neighbour is missing). Spikes on readings at most two apart (a sensor
 * flickering) are one event. Peak: the spike reading farthest from its neighbours; endMs is the
 * last spike reading's time.
 */
export function detectSpikes(readings: readonly Reading[], c: SpikeCondition, opts: Common): DetectedEvent[] {
  if (!(c.jump > 0)) throw new RangeError("The jump must be greater than zero");
  checkOrder(readings);
  const out: (DetectedEvent & { lastIndex: number; size: number })[] = [];
  for (let i = 1; i + 1 < readings.length; i++) {
    const prev = readings[i - 1];
    const cur = readings[i];
    const next = readings[i + 1];
    if (cur.timeMs - prev.timeMs > opts.maxGapMs || next.timeMs - cur.timeMs > opts.maxGapMs) continue;
    const d1 = cur.value - prev.value;
    const d2 = cur.value - next.value;
    if (Math.sign(d1) !== Math.sign(d2) || d1 === 0) continue;
    const size = Math.min(Math.abs(d1), Math.abs(d2));
    if (size <= c.jump) continue;
    const last = out[out.length - 1];
    if (last && i - last.lastIndex <= 2) {
      last.endMs = cur.timeMs;
      last.lastMs = cur.timeMs;
      last.lastIndex = i;
      if (size > last.size) {
        last.size = size;
        last.peakValue = cur.value;
        last.peakMs = cur.timeMs;
      }
    } else {
      out.push({ startMs: cur.timeMs, endMs: cur.timeMs, peakValue: cur.value, peakMs: cur.timeMs, lastMs: cur.timeMs, lastIndex: i, size });
    }
  }
  return out.map(({ lastIndex: _i, size: _s, ...e }) => e);
}

// ---- Missing data -----------------------------------------------------------------------------

export type MissingDataCondition = {
  /** A step between readings longer than this many logging intervals is missing data. */
  intervals: number;
  intervalMs: number;
};

/**
 * No reading for longer than `intervals` × the logging interval. The event starts at the last
 * reading before the gap and ends at the first reading after it. Peak: the gap's length in hours,
 * at its start. Only gaps between readings are found: the stretch after the last reading is not
 * judged here (logger files arrive on rounds, so "no reading yet" is usual until the next round).
 */
export function detectMissingData(readings: readonly Pick<Reading, "timeMs">[], c: MissingDataCondition): DetectedEvent[] {
  if (!(c.intervals > 1)) throw new RangeError("Missing data needs more than one interval");
  if (!(c.intervalMs > 0)) throw new RangeError("The logging interval must be longer than zero");
  const limit = c.intervals * c.intervalMs;
  const out: DetectedEvent[] = [];
  for (let i = 1; i < readings.length; i++) {
    const a = readings[i - 1].timeMs;
    const b = readings[i].timeMs;
    if (!(b > a)) throw new RangeError(`Readings must be in strictly increasing time order (index ${i})`);
    if (b - a > limit) out.push({ startMs: a, endMs: b, peakValue: (b - a) / 3_600_000, peakMs: a, lastMs: b });
  }
  return out;
}
