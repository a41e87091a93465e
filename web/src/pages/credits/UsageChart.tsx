import { Bar, BarChart, CartesianGrid, Legend, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { UsageRow } from '../../api/contract.js';

/** Per month, all members together: free and paid credits charged, and what is still held. Oldest month on the left. */
export function monthTotals(rows: UsageRow[]) {
  const months = new Map<string, { month: string; free: number; paid: number; reserved: number }>();
  for (const r of rows) {
    const m = months.get(r.month) ?? { month: r.month, free: 0, paid: 0, reserved: 0 };
    m.free += r.free;
    m.paid += r.charged - r.free;
    m.reserved += r.reserved;
    months.set(r.month, m);
  }
  return [...months.values()].sort((a, b) => (a.month < b.month ? -1 : 1));
}

export function UsageChart({ rows }: { rows: UsageRow[] }) {
  const data = monthTotals(rows);
  return (
    <figure aria-label="credits used per month">
      {/* 880 px on a laptop as before; a narrower section (a tablet) gets a narrower chart, not a wider page */}
      <div className="h-60 max-w-[880px]">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={data} margin={{ top: 8, right: 8, bottom: 8, left: 8 }}>
            <CartesianGrid strokeDasharray="2 4" stroke="#d9d3c5" vertical={false} />
            <XAxis dataKey="month" tick={{ fontFamily: 'ui-monospace, monospace', fontSize: 12 }} />
            <YAxis allowDecimals={false} tick={{ fontSize: 12 }} label={{ value: 'credits', angle: -90, position: 'insideLeft', fontSize: 12 }} />
            <Tooltip />
            <Legend />
            {/* colour-blind-safe pair (blue / orange) with a grey for what is still held */}
            <Bar dataKey="free" name="free allowance" stackId="used" fill="#0072b2" maxBarSize={72} isAnimationActive={false} />
            <Bar dataKey="paid" name="paid credits" stackId="used" fill="#e69f00" maxBarSize={72} isAnimationActive={false} />
            <Bar dataKey="reserved" name="reserved" stackId="used" fill="#a8a293" maxBarSize={72} isAnimationActive={false} />
          </BarChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}
