import { groupThousands, powerOfTen } from '../format.js';

/**
 * An exact count: "1,000,000 (10⁶)" with a real superscript, followed by its unit when given.
 * The power of ten appears only from 1,000 up, where it helps a reader judge scale at a glance;
 * rounded to three significant digits there ("641,601 (≈ 6.42 × 10⁵)").
 * The number, its power of ten and its unit each hold together, but a line may break between them:
 * on a phone "2,000,000 (2 × 10⁶) grains" is wider than a fact list's value column, and a count that
 * cannot wrap pushes the page sideways.
 */
export function Count({ n, unit, showPower = true, stacked = false, dark = false }: { n: number | bigint; unit?: string; showPower?: boolean; stacked?: boolean; dark?: boolean }) {
  const p = showPower ? powerOfTen(n) : null;
  // on the dark ground the surrounding text is already the quiet tone: unit and power inherit it
  const soft = dark ? undefined : 'text-ink-soft';
  const unitText = unit ? (
    <span className={soft}>
      {' '}
      <span className="whitespace-nowrap">{unit}</span>
    </span>
  ) : null;
  return (
    <span className="tnum">
      <span className="whitespace-nowrap">
        {groupThousands(n)}
        {/* stacked: the unit stays on the number's line, above the power of ten */}
        {stacked && unit ? <span className={soft}> {unit}</span> : null}
      </span>
      {p ? (
        // stacked: the power of ten on its own line, for narrow table columns
        <span className={stacked ? `block text-xs ${soft ?? ''}` : soft}>
          {stacked ? null : ' '}
          <span className="whitespace-nowrap">
            {'('}
            {p.approximate ? '≈ ' : null}
            {p.mantissa === '1' ? null : <>{p.mantissa} × </>}
            10<sup className="text-[0.7em]">{p.exponent}</sup>
            {')'}
          </span>
        </span>
      ) : null}
      {stacked ? null : unitText}
    </span>
  );
}
