import { useState, type ComponentProps } from 'react';
import { TextField } from './Field.js';
import { typedNumber } from './typedNumber.js';

type NumberFieldProps = Omit<ComponentProps<typeof TextField>, 'value' | 'onChange' | 'type'> & {
  value: number | undefined;
  onValue: (n: number | undefined) => void;
  /** empty means "not set" (passed on as undefined) rather than "not finished yet" */
  optional?: boolean;
  /** whole numbers only: a typed 2.6 counts as 3 */
  round?: boolean;
};

/**
 * A number input that passes a value on only once the text is a number, and otherwise shows what is
 * typed. Fed straight back, a controlled number input turned the "-" of "-120" into 0 and the rest into
 * 0120, so no negative lattice coordinate could be typed key by key. Left empty, an optional field
 * passes on undefined; a required one gets its last number back when it loses focus.
 */
export function NumberField({ value, onValue, optional = false, round = false, onBlur, ...rest }: NumberFieldProps) {
  const shown = value === undefined || !Number.isFinite(value) ? '' : String(value);
  const [text, setText] = useState(shown);
  // a change made elsewhere (a region drawn on the view, a preset) replaces the text, unless the
  // text already means that value ("05" stays as typed when the value is 5)
  const [seen, setSeen] = useState(value);
  if (!Object.is(seen, value)) {
    setSeen(value);
    if (typedNumber(text, round) !== (value ?? null)) setText(shown);
  }
  return (
    <TextField
      {...rest}
      type="number"
      value={text}
      onChange={(e) => {
        setText(e.target.value);
        const n = typedNumber(e.target.value, round);
        if (n !== null) onValue(n);
        else if (optional && e.target.value.trim() === '') onValue(undefined);
      }}
      onBlur={(e) => {
        if (typedNumber(text, round) === null && !(optional && text.trim() === '')) setText(shown);
        onBlur?.(e);
      }}
    />
  );
}
