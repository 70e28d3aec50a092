/* colours.js: the colour map for node values, and nothing else.
 *
 * Cividis (Nuñez, Anderson-Cooley, Coyle 2018, "Optimizing colormaps with consideration for
 * color vision deficiency to enable accurate interpretation of scientific data", PLoS ONE
 * 13(7): e0199239): a blue-to-yellow map whose lightness rises evenly and that reads the same
 * for people with red-green colour vision deficiency.
 *
 * The 256 entries below are the authors' published table as shipped in matplotlib 3.10.7
 * (PyPI), `matplotlib._cm_listed._cividis_data`, each channel rounded to 8 bits
 * (round(255 * value)); they were copied from that package, not written from memory.
 */
const CIVIDIS_HEX =
  "00224e00234f00245100255300255400265600275800285900285b00295d002a5f002a61002b62002c64002c66002d68" +
  "002e6a002e6c002f6d00306f0030700031700031710132710533710833700c34700f357012357014367016377018376f" +
  "1a386f1c396f1e3a6f203a6f213b6e233c6e243c6e263d6e273e6e293f6e2a3f6d2b406d2d416d2e416d2f426d31436d" +
  "32436d33446d34456c35456c36466c38476c39486c3a486c3b496c3c4a6c3d4a6c3e4b6c3f4c6c404c6c414d6c424e6c" +
  "434e6c444f6c45506c46516c47516c48526c49536c4a536c4b546c4c556c4d556c4e566c4f576c50576c51586d52596d" +
  "535a6d545a6d555b6d555c6d565c6d575d6d585e6d595e6e5a5f6e5b606e5c616e5d616e5e626e5e636f5f636f60646f" +
  "61656f62656f636670646770656870656870666970676a71686a71696b716a6c716b6d726c6d726c6e726d6f726e6f73" +
  "6f70737071737172747272747273747374757474757575757676767777767777777878777979777a7a787b7a787c7b78" +
  "7d7c787e7c787e7d787f7e78807f78817f788280798381798482798582798683798784788885788985788a86788b8778" +
  "8c88788d88788e89788f8a78908b78918b78928c78928d78938e78948e77958f779690779791779892779992779a9376" +
  "9b94769c95769d95769e96769f9775a09875a19975a29975a39a74a49b74a59c74a69c74a79d73a89e73a99f73aaa073" +
  "aba072aca172ada272aea371afa471b0a571b1a570b3a670b4a76fb5a86fb6a96fb7a96eb8aa6eb9ab6dbaac6dbbad6d" +
  "bcae6cbdae6cbeaf6bbfb06bc0b16ac1b26ac2b369c3b369c4b468c5b568c6b667c7b767c8b866c9b965cbb965ccba64" +
  "cdbb63cebc63cfbd62d0be62d1bf61d2c060d3c05fd4c15fd5c25ed6c35dd7c45cd9c55cdac65bdbc75adcc859ddc858" +
  "dec958dfca57e0cb56e1cc55e2cd54e4ce53e5cf52e6d051e7d150e8d24fe9d34eead34cebd44bedd54aeed649efd748" +
  "f0d846f1d945f2da44f3db42f5dc41f6dd3ff7de3ef8df3cf9e03afbe138fce236fde334fee434fee535fee636fee838";

const CIVIDIS = (function () {
  const rgb = new Uint8Array(256 * 3);
  for (let i = 0; i < 256 * 3; i++) rgb[i] = parseInt(CIVIDIS_HEX.substr(i * 2, 2), 16);
  return rgb;
})();

/** The 256 entries as "rgb(r, g, b)" strings, made once: a graph's fills are thousands
 *  of look-ups, not thousands of new strings. */
const CIVIDIS_CSS = cssColours(CIVIDIS);

/** "rgb(r, g, b)" strings of a table of 8-bit channels (r, g, b, r, g, b, ...). */
function cssColours(rgb) {
  const out = [];
  for (let i = 0; i < rgb.length; i += 3) out.push("rgb(" + rgb[i] + ", " + rgb[i + 1] + ", " + rgb[i + 2] + ")");
  return out;
}

/** Colour for t in [0, 1] as an "rgb(r, g, b)" string; NaN gives the no-value grey. */
function colourAt(t) {
  if (!Number.isFinite(t)) return NO_VALUE_COLOUR;
  return CIVIDIS_CSS[Math.max(0, Math.min(255, Math.round(t * 255)))];
}

/** Grey for nodes with no value in the colouring column (deliberately outside the map). */
const NO_VALUE_COLOUR = "rgb(214, 209, 200)";

/** A CSS linear-gradient through the map, for the legend bar. */
function cividisGradient() {
  const stops = [];
  for (let k = 0; k <= 16; k++) stops.push(colourAt(k / 16) + " " + (k * 100 / 16).toFixed(2) + "%");
  return "linear-gradient(to right, " + stops.join(", ") + ")";
}
