interface Props {
  points: readonly [number, number][];
  width?: number;
  height?: number;
  label: string;
}

/** A tiny temperature trace (time, value), drawn as one SVG path. */
export default function Sparkline({ points, width = 160, height = 36, label }: Props) {
  if (points.length < 2)
    return (
      <svg
        width={width}
        height={height}
        role="img"
        aria-label={`${label}: not enough readings for a trace`}
      />
    );
  const t0 = points[0]![0];
  const t1 = points[points.length - 1]![0];
  let lo = Infinity;
  let hi = -Infinity;
  for (const [, v] of points) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  const span = Math.max(hi - lo, 0.5);
  const x = (t: number) => ((t - t0) / Math.max(1, t1 - t0)) * (width - 2) + 1;
  const y = (v: number) => height - 2 - ((v - lo) / span) * (height - 4);
  const d = points
    .map(([t, v], i) => `${i ? "L" : "M"}${x(t).toFixed(1)},${y(v).toFixed(1)}`)
    .join("");
  return (
    <svg
      width={width}
      height={height}
      viewBox={`0 0 ${width} ${height}`}
      role="img"
      aria-label={label}
      className="block w-full"
    >
      <path
        d={d}
        fill="none"
        stroke="currentColor"
        strokeWidth={1.5}
        vectorEffect="non-scaling-stroke"
      />
    </svg>
  );
}
