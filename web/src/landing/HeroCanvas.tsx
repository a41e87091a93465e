import { useEffect, useRef } from 'react';
import { stabiliseSquare } from './heroPile.js';

/** Heights 0..3 of toppled sites; untouched sites stay paper. Chosen to read apart without hue alone. */
const COLOURS = ['#e7dcc3', '#9bbcd6', '#c0573b', '#1e4a6e'] as const;
export const HERO_GRAINS = 12_000;

export function HeroCanvas() {
  const ref = useRef<HTMLCanvasElement>(null);
  useEffect(() => {
    const canvas = ref.current;
    const ctx = canvas?.getContext('2d');
    if (!canvas || !ctx) return;
    const pile = stabiliseSquare(HERO_GRAINS, 101);
    const cell = canvas.width / pile.size;
    ctx.clearRect(0, 0, canvas.width, canvas.height);
    for (let i = 0; i < pile.heights.length; i++) {
      if (!pile.toppled[i]) continue;
      ctx.fillStyle = COLOURS[pile.heights[i]!]!;
      const x = i % pile.size;
      const y = (i - x) / pile.size;
      ctx.fillRect(x * cell, y * cell, Math.ceil(cell), Math.ceil(cell));
    }
  }, []);
  return (
    <canvas
      ref={ref}
      width={505}
      height={505}
      className="h-auto w-full max-w-[420px] [image-rendering:pixelated]"
      role="img"
      aria-label={`final stable heights of ${HERO_GRAINS.toLocaleString('en-US')} grains on the square lattice`}
    />
  );
}
