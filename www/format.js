/* format.js: how numbers and counts are written on the page, and small DOM helpers.
 * No state and no engine calls here. Text from files only ever goes through textContent. */

/** A number with about four significant digits, without noise like 12.300000001. */
function formatNumber(x) {
  if (x === null || x === undefined || Number.isNaN(x)) return "—";
  if (!Number.isFinite(x)) return x > 0 ? "∞" : "−∞";
  const a = Math.abs(x);
  if (a !== 0 && (a >= 1e6 || a < 1e-3)) return x.toExponential(2).replace("-", "−");
  let digits = a >= 1000 ? 0 : a >= 100 ? 1 : a >= 10 ? 2 : 3;
  let s = x.toFixed(digits);
  if (s.indexOf(".") >= 0) s = s.replace(/0+$/, "").replace(/\.$/, "");
  return s.replace("-", "−");
}

/** One formatter for every count: making one is far slower than using it (a page of
 *  a few hundred counts spent 20 ms making formatters through toLocaleString). */
const COUNT_FORMAT = new Intl.NumberFormat("en-GB");

/** A count with thin separators: 12 345. */
function formatCount(n) {
  return COUNT_FORMAT.format(Number(n)).replace(/,/g, "\u2009");
}

/** "1 row" / "3 rows". */
function plural(n, one, many) {
  return formatCount(n) + " " + (n === 1 ? one : many);
}

/** Creates an element with optional class and text (never HTML). */
function el(tag, className, text) {
  const e = document.createElement(tag);
  if (className) e.className = className;
  if (text !== undefined && text !== null) e.textContent = String(text);
  return e;
}

function byId(id) {
  const e = document.getElementById(id);
  if (!e) throw new Error("page is missing element #" + id);
  return e;
}

/** An engine message whose second line puts carets under a text ("setting 'f': TEXT\n
 *  ^^^ why"), with the field on a line of its own so that the carets line up under the
 *  text in a monospace block. Other messages come back as they are. */
function caretText(message) {
  const m = /^(setting '[^']*':) ([^\n]*\n)/.exec(message || "");
  return m ? m[1] + "\n" + message.slice(m[0].length - m[2].length) : (message || "");
}

/** Shows `message` in `box` (a monospace block) as caretText() writes it: the lines up to
 *  the carets kept as they are, so that the carets line up, and the reason after them
 *  wrapping within the box instead of running out of sight. */
function showCaretMessage(box, message) {
  box.textContent = "";
  const text = caretText(message);
  const m = /^([\s\S]*\n *\^+ )([\s\S]*)$/.exec(text);
  if (!m) { box.textContent = text; return; }
  box.append(el("span", "caret-lines", m[1]), el("span", "caret-why", m[2]));
}

/** Parses "−9999, 999" into numbers; throws with a message that names the bad entry. */
function parseNumberList(text) {
  const out = [];
  for (const part of text.split(/[,;\s]+/)) {
    if (part === "") continue;
    const v = Number(part.replace("−", "-"));
    if (!Number.isFinite(v)) throw new Error("setting 'missing.fillValues': '" + part + "' is not a number; list numbers separated by commas");
    out.push(v);
  }
  return out;
}

/* ---------------------------------------------------------------- times
 * A time column's values are seconds since 1970-01-01 00:00 UTC; its summary's `time`
 * ({zone, offset, zoned, precision, first, last}) says how its clocks were written. The page
 * writes an instant as "2013-01-01 06:00" in the column's own zone (UTC when its offsets
 * differ by row) and says the zone once, beside it; the exports write ISO 8601 (the engine). */

const TIME_UNIT_SECONDS = { day: 86400, minute: 60, second: 1, fraction: 0 };

function pad2(n) {
  return (n < 10 ? "0" : "") + n;
}

/** Seconds east of UTC of a time column's clocks as the page shows them. */
function shownOffset(time) {
  return time && typeof time.offset === "number" ? time.offset : 0;
}

/** A short word for the zone instants of a time column are shown in (legends, axes):
 *  "UTC", "+02:00", or "no zone written". */
function zoneShort(time) {
  if (!time) return "";
  if (!time.zoned) return "no zone written";
  return typeof time.offset === "number" ? time.zone : "UTC";
}

/** The instant `seconds` in `time`'s zone: "2013-01-01" (precision "day"), "2013-01-01 06:00"
 *  ("minute"), "… 06:00:15" ("second"), "… 06:00:15.25" ("fraction"); rounded to that unit.
 *  `precision` defaults to the coarsest that shows every value of the column exactly
 *  (`time.shown`: a file writing :00 seconds everywhere is shown to the minute); a
 *  dates-only column shows the clock of a value
 *  that is not a midnight (a node's mean). */
function formatInstant(seconds, time, precision) {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return "—";
  const offset = shownOffset(time);
  let p = precision || (time && (time.shown || time.precision)) || "minute";
  let local = seconds + offset;
  if (p === "day" && ((local % 86400) + 86400) % 86400 !== 0 && !precision) p = "minute";
  const unit = TIME_UNIT_SECONDS[p];
  if (unit) local = Math.round(local / unit) * unit;
  const d = new Date(Math.round(local * 1000));
  const y = d.getUTCFullYear();
  let text = (y < 1000 ? String(y).padStart(4, "0") : y) + "-" + pad2(d.getUTCMonth() + 1) + "-" + pad2(d.getUTCDate());
  if (p === "day") return text;
  text += " " + pad2(d.getUTCHours()) + ":" + pad2(d.getUTCMinutes());
  if (p === "minute") return text;
  text += ":" + pad2(d.getUTCSeconds());
  if (p === "fraction") text += ("." + String(d.getUTCMilliseconds()).padStart(3, "0")).replace(/\.?0+$/, "");
  return text;
}

/** The unit to show instants spread over `span` seconds in (bounds of a legend or an axis):
 *  days over several days, minutes over several minutes, else seconds. */
function spanPrecision(span) {
  return span >= 3 * 86400 ? "day" : span >= 180 ? "minute" : "second";
}

/** A length of time in seconds, in the largest unit that keeps it above 1: "3.2 h". */
function formatDuration(seconds) {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return "—";
  const a = Math.abs(seconds);
  const [unit, name] = a >= 86400 * 2 ? [86400, " d"] : a >= 7200 ? [3600, " h"] : a >= 120 ? [60, " min"] : [1, " s"];
  return formatNumber(seconds / unit) + name;
}

/** Steps between time ticks, in seconds (months and years are counted in the calendar). */
const TIME_STEPS = [
  [1, "s"], [5, "s"], [15, "s"], [30, "s"], [60, "s"], [300, "s"], [900, "s"], [1800, "s"],
  [3600, "s"], [3 * 3600, "s"], [6 * 3600, "s"], [12 * 3600, "s"], [86400, "s"], [2 * 86400, "s"], [7 * 86400, "s"],
  [1, "month"], [3, "month"], [6, "month"], [1, "year"], [2, "year"], [5, "year"], [10, "year"], [50, "year"], [100, "year"],
];

/** At most `most` round instants between `lo` and `hi` (seconds) in `time`'s zone, each
 *  {at: seconds, label}: whole hours, days, months or years as the span calls for. */
function timeTicks(lo, hi, time, most) {
  if (!(hi > lo)) return [];
  const offset = shownOffset(time);
  const span = hi - lo;
  const approx = (s) => (s[1] === "month" ? s[0] * 30.44 * 86400 : s[1] === "year" ? s[0] * 365.25 * 86400 : s[0]);
  const step = TIME_STEPS.find((s) => span / approx(s) <= most) || TIME_STEPS[TIME_STEPS.length - 1];
  const out = [];
  const label = step[1] === "year" ? (d) => String(d.getUTCFullYear())
    : step[1] === "month" ? (d) => d.getUTCFullYear() + "-" + pad2(d.getUTCMonth() + 1)
    : step[0] >= 86400 ? (d) => d.getUTCFullYear() + "-" + pad2(d.getUTCMonth() + 1) + "-" + pad2(d.getUTCDate())
    : step[0] >= 60 ? (d) => pad2(d.getUTCMonth() + 1) + "-" + pad2(d.getUTCDate()) + " " + pad2(d.getUTCHours()) + ":" + pad2(d.getUTCMinutes())
    : (d) => pad2(d.getUTCHours()) + ":" + pad2(d.getUTCMinutes()) + ":" + pad2(d.getUTCSeconds());
  if (step[1] === "s") {
    for (let t = Math.ceil((lo + offset) / step[0]) * step[0]; t <= hi + offset && out.length <= most; t += step[0]) {
      out.push({ at: t - offset, label: label(new Date(t * 1000)) });
    }
    return out;
  }
  const months = step[1] === "year" ? step[0] * 12 : step[0];
  const start = new Date((lo + offset) * 1000);
  let m = start.getUTCFullYear() * 12 + start.getUTCMonth();
  m = Math.ceil(m / months) * months;
  for (;; m += months) {
    const t = Date.UTC(Math.floor(m / 12), m % 12, 1) / 1000;
    if (t < lo + offset) continue;
    if (t > hi + offset || out.length > most) break;
    out.push({ at: t - offset, label: label(new Date(t * 1000)) });
  }
  return out;
}
