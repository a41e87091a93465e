import { NpyFormatError } from './errors.js';

/**
 * The .npy header is the repr() of a Python dict. This reads the small literal subset NumPy writes
 * (strings, integers, True/False/None, tuples, lists, dicts) rather than trusting eval-like tricks.
 */
export type PyValue = string | number | boolean | null | PyValue[] | { [key: string]: PyValue };

export function parsePyLiteral(text: string): PyValue {
  let i = 0;
  const fail = (what: string): never => {
    throw new NpyFormatError(`malformed header: ${what} at character ${i}`);
  };
  const skipSpace = () => {
    while (i < text.length && /\s/.test(text[i]!)) i++;
  };
  const value = (): PyValue => {
    skipSpace();
    const c = text[i];
    if (c === undefined) return fail('unexpected end');
    if (c === "'" || c === '"') return str();
    if (c === '{') return dict();
    if (c === '(' || c === '[') return sequence(c === '(' ? ')' : ']');
    if (/[-+\d]/.test(c)) return int();
    for (const [word, v] of [['True', true], ['False', false], ['None', null]] as const) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return v;
      }
    }
    return fail(`unexpected '${c}'`);
  };
  const str = (): string => {
    const quote = text[i++];
    let out = '';
    while (i < text.length && text[i] !== quote) {
      if (text[i] === '\\') i++;
      out += text[i++];
    }
    if (text[i] !== quote) fail('unterminated string');
    i++;
    return out;
  };
  const int = (): number => {
    const m = /^[-+]?\d+L?/.exec(text.slice(i));
    if (!m) return fail('bad number');
    i += m[0].length;
    const n = Number(m[0].replace(/L$/, ''));
    if (!Number.isSafeInteger(n)) fail('number too large');
    return n;
  };
  const sequence = (close: string): PyValue[] => {
    i++;
    const items: PyValue[] = [];
    for (;;) {
      skipSpace();
      if (text[i] === close) {
        i++;
        return items;
      }
      items.push(value());
      skipSpace();
      if (text[i] === ',') i++;
      else if (text[i] !== close) fail(`expected ',' or '${close}'`);
    }
  };
  const dict = (): { [key: string]: PyValue } => {
    i++;
    const out: { [key: string]: PyValue } = {};
    for (;;) {
      skipSpace();
      if (text[i] === '}') {
        i++;
        return out;
      }
      const key = value();
      if (typeof key !== 'string') fail('dict key is not a string');
      skipSpace();
      if (text[i] !== ':') fail("expected ':'");
      i++;
      out[key as string] = value();
      skipSpace();
      if (text[i] === ',') i++;
      else if (text[i] !== '}') fail("expected ',' or '}'");
    }
  };
  const result = value();
  skipSpace();
  if (i !== text.length) fail('trailing characters');
  return result;
}

/** The dict literal exactly as NumPy's format module writes it (keys sorted, trailing ", "). */
export function formatHeaderDict(descr: string, shape: readonly number[]): string {
  const tuple = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  return `{'descr': '${descr}', 'fortran_order': False, 'shape': ${tuple}, }`;
}
