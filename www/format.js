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
