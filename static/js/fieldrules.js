// The page's field checks, from the server's declaration (/fields.json, written by slipwise.contract.page).
// Pure: no DOM, no fetch, so node runs it too (tests/contract/test_hostile_table.py). The rules are the
// contract's cell rules: trim the declared white space; a number is ASCII digits with one "." or ","
// (1,500 is ambiguous and refused), a sign, an exponent; no words (inf, nan), no other digits, no
// thousands separators; tags refuse control, invisible and direction-changing characters.

/** Fields with their rules attached: {NAMEPLATE_NUMBERS, NAMEPLATE_CHOICES, READING_NUMBERS, TEXT, FIELD}. */
export function fieldsFrom(decl) {
  const cells = decl.cells;
  const rules = {
    trim: new Set([...cells.trim]),
    number: new RegExp(cells.number_pattern),
    ambiguous: new RegExp(cells.ambiguous_pattern),
  };
  const withRules = (f) => ({ ...f, rules });
  const text = Object.fromEntries(Object.entries(decl.text).map(([name, f]) => [name, {
    ...f, rules, refused: new RegExp(`[${f.refused_categories.map((c) => `\\p{${c}}`).join("")}]`, "u"),
    line: f.line_pattern ? new RegExp(f.line_pattern) : null,
  }]));
  const NAMEPLATE_NUMBERS = decl.nameplate_numbers.map(withRules);
  const READING_NUMBERS = decl.reading_numbers.map(withRules);
  const READING_TEST_NUMBERS = (decl.reading_test_numbers || []).map(withRules);
  const READING_CHOICES = decl.reading_choices || [];
  const SITE_NUMBERS = (decl.site_numbers || []).map(withRules);
  return {
    NAMEPLATE_NUMBERS, READING_NUMBERS, READING_TEST_NUMBERS, READING_CHOICES, SITE_NUMBERS,
    NAMEPLATE_CHOICES: decl.nameplate_choices, TEXT: text, CRITERIA: decl.sheet_criteria || {},
    CHOICE: Object.fromEntries([...decl.nameplate_choices, ...READING_CHOICES].map((c) => [c.name, c])),
    FIELD: Object.fromEntries([...NAMEPLATE_NUMBERS, ...READING_NUMBERS, ...READING_TEST_NUMBERS, ...SITE_NUMBERS].map((f) => [f.name, f])),
  };
}

/** The text without the declared white space at either end. */
export function trimCell(text, rules) {
  const chars = [...text];
  let a = 0;
  let b = chars.length;
  while (a < b && rules.trim.has(chars[a])) a += 1;
  while (b > a && rules.trim.has(chars[b - 1])) b -= 1;
  return chars.slice(a, b).join("");
}

const WORD_UNITS = new Set(["cos φ", "SF", "poles"]); // names, not units: left out of "0.3 to 0.98"

export function fmtRange(f) {
  return WORD_UNITS.has(f.unit) || !f.unit ? `${f.low} to ${f.high}` : `${f.low} to ${f.high} ${f.unit}`;
}

/** Parse one typed value: {value, error}. Blank gives value null. */
export function parseField(f, raw) {
  const text = trimCell(String(raw ?? ""), f.rules);
  if (text === "") {
    return f.required ? { value: null, error: `${f.label} is needed (${fmtRange(f)}).` } : { value: null, error: null };
  }
  if (!f.rules.number.test(text)) {
    return { value: null, error: `${f.label}: "${text.slice(0, 20)}" is not a number. Allowed: ${fmtRange(f)}.` };
  }
  if (f.rules.ambiguous.test(text)) {
    return { value: null, error: `${f.label}: "${text}" could be a thousands separator or a decimal comma. Write it without the separator, or with a decimal point.` };
  }
  const v = Number(text.replace(",", ".")) + 0; // + 0 turns -0 into 0
  if (!Number.isFinite(v) || v < f.low || v > f.high) {
    // a per-unit field typed as a percentage (power factor 85 for 0.85): say what was probably meant
    const asFraction = v / 100;
    const meant = f.high <= 1 && v > 1 && v <= 100 && asFraction >= f.low && asFraction <= f.high
      ? ` Written as a percentage? ${v} % is ${asFraction}.` : "";
    return { value: v, error: `${f.label} ${v}${WORD_UNITS.has(f.unit) || !f.unit ? "" : ` ${f.unit}`} is outside ${fmtRange(f)}.${meant}` };
  }
  if (f.integer && !Number.isInteger(v)) {
    return { value: v, error: `${f.label} must be a whole number (${fmtRange(f)}).` };
  }
  return { value: v, error: null };
}

/** Check free text (tag, site, ...): {value, error}; value is the trimmed text. */
export function parseText(t, raw) {
  const text = trimCell(String(raw ?? ""), t.rules);
  if (text === "") return t.required ? { value: "", error: `${t.label} is needed.` } : { value: "", error: null };
  const chars = [...text];
  const bad = chars.find((c) => (t.refused.test(c) && !(!t.one_line && (c === "\t" || c === "\n"))))
    ?? (t.one_line ? chars.find((c) => c === "\t" || c === "\n") : undefined);
  if (bad !== undefined) {
    const code = bad.codePointAt(0).toString(16).toUpperCase().padStart(4, "0");
    return { value: text, error: `${t.label} holds U+${code}, a control, invisible or direction-changing character: type it again.` };
  }
  if (chars.length > t.max_chars) return { value: text, error: `${t.label} is ${chars.length} characters long; at most ${t.max_chars}.` };
  if (t.line) {
    const lines = text.split("\n");
    for (let k = 0; k < lines.length; k += 1) {
      const line = lines[k].replace(/^[ \t]+|[ \t]+$/g, "");
      if (line && (!t.line.test(line) || !realDate(line.split(";")[2]))) {
        return { value: text, error: `${t.label}, line ${k + 1}: ${t.help || "not in the declared form"}` };
      }
    }
  }
  return { value: text, error: null };
}

/** A YYYY-MM-DD date that exists in the calendar (2025-02-29 does not). */
function realDate(text) {
  const m = /^\s*(\d{4})-(\d{2})-(\d{2})\s*$/.exec(text ?? "");
  if (!m) return false;
  const d = new Date(Date.UTC(+m[1], +m[2] - 1, +m[3]));
  return d.getUTCFullYear() === +m[1] && d.getUTCMonth() === +m[2] - 1 && d.getUTCDate() === +m[3];
}

/** A choice matched without regard to case: {value, error}. */
export function parseChoice(c, raw, rules) {
  const text = trimCell(String(raw ?? ""), rules);
  if (text === "") return { value: null, error: null };
  const code = c.choices.find((x) => x.toLowerCase() === text.toLowerCase());
  return code === undefined ? { value: null, error: `${c.label}: use one of ${c.choices.join(", ")}.` } : { value: code, error: null };
}
