import { toneClasses, toneMarks, type Tone } from "./ReleaseFormat";

/** A state by word and mark together, never by colour alone (the island twin of StateBadge.astro). */
export default function ReleaseBadge({
  tone,
  label,
  large = false,
}: {
  tone: Tone;
  label: string;
  large?: boolean;
}) {
  return (
    <span
      className={`inline-flex items-center gap-1 rounded-full font-bold ${large ? "px-3 py-1 text-sm" : "px-2 py-0.5 text-xs"} ${toneClasses[tone]}`}
    >
      <span aria-hidden="true">{toneMarks[tone]}</span>
      {label}
    </span>
  );
}
