import { Link } from 'react-router';
import { useMe } from '../api/queries.js';
import { Count, LinkButton } from '../ui/index.js';
import { HERO_GRAINS, HeroCanvas } from '../landing/HeroCanvas.js';

const FEATURES = [
  { title: 'Exact, grain by grain', text: 'Final heights and odometers of single-source runs on Z², Z³, triangular, honeycomb and periodic lattices, over constant, checkerboard, random or uploaded backgrounds.' },
  { title: 'From pile to cell', text: 'Pan and zoom a finished run down to single sites; switch between heights, the toppled region, the change from the background and the odometer on a log scale.' },
  { title: 'Printed to size', text: 'Order figures for papers, posters and theses at an exact physical size and resolution, and give readers a permanent link they can zoom into and cite.' },
  { title: 'One budget per lab', text: 'Labs share compute credits; managers set monthly quotas per member and invite colleagues by e-mail.' },
];

export function Landing() {
  const me = useMe();
  return (
    <div>
      <section className="grid grid-cols-1 items-center gap-10 pt-4 md:grid-cols-[1.15fr_1fr] md:gap-14">
        <div>
          <p className="text-xs font-semibold uppercase tracking-[0.18em] text-stamp">A print shop for sandpiles</p>
          <h1 className="mt-4 text-4xl font-semibold leading-[1.08] tracking-tight text-ink sm:text-5xl">
            Exact abelian sandpiles, computed at scale and printed to size.
          </h1>
          <p className="mt-6 max-w-xl text-lg leading-relaxed text-ink-soft">
            Toppleworks stabilises runs of millions of grains and far beyond, keeps every height exact, and turns the
            result into deep-zoom pages and print-ready figures your lab can publish and cite.
          </p>
          <div className="mt-9 flex flex-wrap gap-3">
            {me.data ? (
              <LinkButton to="/runs">Go to your runs</LinkButton>
            ) : (
              <>
                <LinkButton to="/sign-up">Create an account</LinkButton>
                <LinkButton to="/sign-in" tone="quiet">
                  Sign in
                </LinkButton>
              </>
            )}
            <LinkButton to="/figures" tone="quiet">
              Browse published figures
            </LinkButton>
          </div>
        </div>
        <figure className="min-w-0 rounded-2xl border border-rule bg-sheet p-4 shadow-[0_1px_0_rgba(0,0,0,0.03)] sm:p-6">
          <div className="flex justify-center">
            <HeroCanvas />
          </div>
          <figcaption className="mt-4 text-center text-sm text-ink-soft">
            <Count n={HERO_GRAINS} unit="grains" /> at the origin of the square lattice, stabilised in your browser
            just now. Colours mark heights 0–3 of sites that toppled.
          </figcaption>
        </figure>
      </section>

      <section className="mt-16 grid grid-cols-1 gap-6 border-t border-rule pt-10 sm:grid-cols-2 md:mt-20 lg:grid-cols-4">
        {FEATURES.map((f) => (
          <div key={f.title}>
            <h2 className="text-base font-semibold text-ink">{f.title}</h2>
            <p className="mt-2 text-sm leading-relaxed text-ink-soft">{f.text}</p>
          </div>
        ))}
      </section>

      <p className="mt-14 text-sm text-ink-soft">
        Reading a paper that links here? Published figures open without an account — start at the{' '}
        <Link to="/figures">figure index</Link>.
      </p>
    </div>
  );
}
