import { groupThousands, powerOfTen } from '../format.js';

/**
 * An exact count: "1,000,000 (10⁶)" with a real superscript, followed by its unit when given.
 * The power of ten appears only from 1,000 up, where it helps a reader judge scale at a glance.
 */
export function Count({ n, unit, showPower = true, stacked = false }: { n: number | bigint; unit?: string; showPower?: boolean; stacked?: boolean }) {
  const p = showPower ? powerOfTen(n) : null;
  const unitText = unit ? <span className="text-ink-soft"> {unit}</span> : null;
  return (
    <span className="tnum whitespace-nowrap">
      {groupThousands(n)}
      {/* stacked: the unit stays on the number's line, above the power of ten */}
      {stacked ? unitText : null}
      {p ? (
        // stacked: the power of ten on its own line, for narrow table columns
        <span className={stacked ? 'block text-xs text-ink-soft' : 'text-ink-soft'}>
          {stacked ? '(' : ' ('}
          {p.mantissa === '1' ? null : <>{p.mantissa} × </>}
          10<sup className="text-[0.7em]">{p.exponent}</sup>
          {')'}
        </span>
      ) : null}
      {stacked ? null : unitText}
    </span>
  );
}
