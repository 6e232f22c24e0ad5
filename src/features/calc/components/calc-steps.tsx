/** The computation, line by line, as the shared engine wrote it: a worksheet a person can check. */
export function CalcSteps({ steps }: { steps: readonly string[] }) {
  return (
    <ol className="figures list-decimal space-y-1.5 pl-6 text-sm leading-relaxed text-ink marker:text-ink-muted">
      {steps.map((step, index) => (
        <li key={index} className="pl-1 break-words">
          {step}
        </li>
      ))}
    </ol>
  );
}
