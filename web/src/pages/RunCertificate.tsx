import type { Certificate } from '../../../shared/run-stats.js';
import { certificateChecks, certificateHeadline, certificateTone, methodWords, type CertificateCheck } from '../../../shared/certificate-words.js';

const MARK = { true: '✓', false: '✗', null: '–' } as const;
const MARK_TONE = { true: 'text-leaf', false: 'text-stamp', null: 'text-ink-faint' } as const;

function CheckRow({ check }: { check: CertificateCheck }) {
  const key = String(check.ok) as 'true' | 'false' | 'null';
  return (
    <li className="flex gap-3">
      <span aria-hidden className={`w-4 shrink-0 text-center font-semibold ${MARK_TONE[key]}`}>
        {MARK[key]}
      </span>
      <span>
        <span className="font-medium text-ink">{check.name.charAt(0).toUpperCase() + check.name.slice(1)}.</span>{' '}
        <span className="text-ink-soft">{check.detail}</span>
      </span>
    </li>
  );
}

/**
 * The run's exactness certificate as a verdict with its checks: what a researcher (and whoever cites
 * a figure of the run) needs to trust that the pile shown is the exact final state.
 */
export function RunCertificate({ certificate }: { certificate: Certificate | null | undefined }) {
  const tone = certificateTone(certificate);
  if (tone === 'none' || !certificate) {
    return (
      <div data-testid="run-certificate" data-verdict="none" className="text-sm">
        <p className="font-semibold text-ink">{certificateHeadline(certificate)}</p>
        <p className="mt-1 text-ink-soft">
          This run was computed before certificates existed, so stability, the odometer check and minimality were not recorded with it. Re-run computes it
          again with a certificate.
        </p>
      </div>
    );
  }
  const passed = tone === 'passed';
  return (
    <div data-testid="run-certificate" data-verdict={tone} className="text-sm">
      {/* on a phone the verdict stands above its sentence, on one line of its own */}
      <p className="flex items-baseline gap-3 max-sm:flex-col max-sm:gap-2">
        <span
          className={`rounded-full border px-2.5 py-0.5 max-sm:whitespace-nowrap text-xs font-semibold uppercase tracking-[0.08em] ${passed ? 'border-leaf/30 bg-leaf-tint text-leaf' : 'border-stamp/30 bg-stamp-tint text-stamp'}`}
        >
          {certificateHeadline(certificate)}
        </span>
        <span className="text-ink-soft">
          {passed
            ? 'The final pile is the exact result, checked against the engine’s own record of every toppling.'
            : 'A check failed: do not rely on this result. The engine never publishes such a run; re-run it, and tell us if it fails again.'}
        </span>
      </p>
      <ul className="mt-4 space-y-2">
        {certificateChecks(certificate).map((c) => (
          <CheckRow key={c.name} check={c} />
        ))}
      </ul>
      <p className="mt-4 border-t border-rule-soft pt-3 text-ink-soft">
        <span className="font-medium text-ink">How it was computed:</span> {methodWords(certificate)}.
      </p>
    </div>
  );
}
