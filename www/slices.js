/* slices.js: work on the page's main thread that is too long for one task, run as slices
 * with the event loop given back in between, so clicks, frames and the engine's messages
 * are not held up (a task over 50 ms is felt). It knows nothing of what the work is. */

/** Milliseconds a slice aims at. What a slice hands over to the browser comes on top: a
 *  canvas is turned into pixels at the end of the task, and a thumbnail's 8 ms of drawing
 *  calls took 25 ms more there. */
const BACKGROUND_SLICE_MS = 4;

/** Runs `fn` in a task of its own, after what is waiting (frames, input, messages). */
function laterTask(fn) {
  if (typeof scheduler !== "undefined" && scheduler && typeof scheduler.postTask === "function") {
    scheduler.postTask(fn, { priority: "background" });
  } else setTimeout(fn, 0);
}

/** Calls `step(deadline)` in tasks of their own until it returns true; `deadline` is the
 *  performance.now() time at which the step should stop and return false. `cancel()`
 *  stops it before the next slice; `done` resolves when the work ends either way (true
 *  when finished). An error in a step ends the work and rejects `done`. */
function inSlices(step) {
  let cancelled = false;
  let finish, fail;
  const done = new Promise(function (resolve, reject) { finish = resolve; fail = reject; });
  const run = function () {
    if (cancelled) { finish(false); return; }
    let over;
    try { over = step(performance.now() + BACKGROUND_SLICE_MS); } catch (e) { fail(e); return; }
    if (over) finish(true); else laterTask(run);
  };
  laterTask(run);
  return { done, cancel: function () { cancelled = true; } };
}
