import { Bar, BarChart, CartesianGrid, Legend, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { LabUsage } from '../../api/contract.js';
import { formatDateTime, groupThousands } from '../../format.js';
import { INK } from '../../plots/RunPlots.js';
import { creditTicks } from './adminFormat.js';

const tick = { fontSize: 11, fill: INK.soft };
const AMBER = '#b7791f';

/** Credits used, granted and bought per month: the trend an admin scans for a lab drifting past its allowance. */
export function CreditsByMonthChart({ lab }: { lab: LabUsage }) {
  const y = creditTicks(lab.months.flatMap((m) => [m.credits, m.granted, m.purchased]));
  return (
    <figure aria-label={`credits per month for ${lab.name}`} data-testid="chart-credits">
      <figcaption className="mb-2 text-sm font-medium text-ink">Credits per month</figcaption>
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={lab.months} margin={{ top: 8, right: 12, bottom: 4, left: 12 }}>
            <CartesianGrid stroke={INK.rule} vertical={false} />
            <XAxis dataKey="month" tick={tick} />
            <YAxis tick={tick} ticks={y.ticks} domain={y.domain} allowDecimals={false} tickFormatter={(v: number) => groupThousands(v)} width={64} label={{ value: 'credits', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <Tooltip formatter={(v, name) => [`${groupThousands(Number(v))} credits`, String(name)]} />
            <Legend wrapperStyle={{ fontSize: 12 }} />
            <Bar dataKey="credits" name="used" fill={INK.press} isAnimationActive={false} />
            <Bar dataKey="granted" name="granted" fill={INK.stamp} isAnimationActive={false} />
            <Bar dataKey="purchased" name="bought" fill={AMBER} isAnimationActive={false} />
          </BarChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

/** The paid balance after each entry that moved it; a grant shows as a step up. */
export function BalanceChart({ lab }: { lab: LabUsage }) {
  const points = lab.balanceHistory.map((p, i) => ({ ...p, step: i + 1, label: formatDateTime(p.at) }));
  const y = creditTicks(points.map((p) => p.available));
  return (
    <figure aria-label={`paid balance of ${lab.name}`} data-testid="chart-balance">
      <figcaption className="mb-2 text-sm font-medium text-ink">
        Paid balance after each entry <span className="text-ink-soft">(now {groupThousands(lab.available)} credits)</span>
      </figcaption>
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <LineChart data={points} margin={{ top: 8, right: 12, bottom: 4, left: 12 }}>
            <CartesianGrid stroke={INK.rule} />
            <XAxis dataKey="step" tick={tick} label={{ value: 'ledger entry', position: 'insideBottom', offset: -2, fontSize: 11 }} />
            <YAxis tick={tick} ticks={y.ticks} domain={y.domain} allowDecimals={false} tickFormatter={(v: number) => groupThousands(v)} width={64} label={{ value: 'credits', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <Tooltip formatter={(v) => [`${groupThousands(Number(v))} credits`, 'available']} labelFormatter={(_s, p) => (p[0] ? `${p[0].payload.kind}, ${p[0].payload.label}` : '')} />
            <Line type="stepAfter" dataKey="available" stroke={INK.press} strokeWidth={2} dot={{ r: 3 }} isAnimationActive={false} />
          </LineChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

/** CPU-seconds and runs per month. */
export function ComputeByMonthChart({ lab }: { lab: LabUsage }) {
  return (
    <figure aria-label={`compute per month for ${lab.name}`} data-testid="chart-compute">
      <figcaption className="mb-2 text-sm font-medium text-ink">CPU-seconds and runs per month</figcaption>
      <div className="h-56">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={lab.months} margin={{ top: 8, right: 12, bottom: 4, left: 12 }}>
            <CartesianGrid stroke={INK.rule} vertical={false} />
            <XAxis dataKey="month" tick={tick} />
            <YAxis yAxisId="s" tick={tick} width={64} tickFormatter={(v: number) => groupThousands(Math.round(v))} label={{ value: 'CPU-seconds', angle: -90, position: 'insideLeft', fontSize: 11 }} />
            <YAxis yAxisId="n" orientation="right" tick={tick} width={40} allowDecimals={false} label={{ value: 'runs', angle: 90, position: 'insideRight', fontSize: 11 }} />
            <Tooltip formatter={(v, name) => [name === 'runs' ? `${groupThousands(Number(v))} runs` : `${groupThousands(Math.round(Number(v)))} s`, String(name)]} />
            <Legend wrapperStyle={{ fontSize: 12 }} />
            <Bar yAxisId="s" dataKey="cpuSeconds" name="CPU-seconds" fill={INK.press} isAnimationActive={false} />
            <Bar yAxisId="n" dataKey="runs" name="runs" fill={AMBER} isAnimationActive={false} />
          </BarChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

/** Every lab's use this month against its allowance, over-quota labs in the stamp colour. */
export function AllowanceChart({ labs }: { labs: LabUsage[] }) {
  const data = labs.map((l) => ({ name: l.name, used: l.usedThisMonth, allowance: l.freeAllowance }));
  const x = creditTicks(data.flatMap((d) => [d.used, d.allowance]));
  return (
    <figure aria-label="use this month against the free allowance" data-testid="chart-allowance">
      <figcaption className="mb-2 text-sm font-medium text-ink">This month: credits used against each lab's free allowance</figcaption>
      <div style={{ height: Math.max(120, 40 * data.length + 40) }}>
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={data} layout="vertical" margin={{ top: 4, right: 16, bottom: 4, left: 12 }}>
            <CartesianGrid stroke={INK.rule} horizontal={false} />
            <XAxis type="number" tick={tick} ticks={x.ticks} domain={x.domain} allowDecimals={false} tickFormatter={(v: number) => groupThousands(v)} />
            <YAxis type="category" dataKey="name" tick={tick} width={210} />
            <Tooltip formatter={(v, name) => [`${groupThousands(Number(v))} credits`, String(name)]} />
            <Legend wrapperStyle={{ fontSize: 12 }} />
            <Bar dataKey="used" name="used" fill={INK.stamp} isAnimationActive={false} />
            <Bar dataKey="allowance" name="free allowance" fill={INK.press} isAnimationActive={false} />
          </BarChart>
        </ResponsiveContainer>
      </div>
    </figure>
  );
}
