// The cautions a beam bench calls for, always on screen; they defer to the lab's own rules.
export const CAUTIONS: readonly { key: string; text: string }[] = [
  { key: 'magnets', text: 'Strong magnets: keep implant wearers away; no steel tools near the pole gaps.' },
  { key: 'oven', text: 'Hot oven: burns and hot vapour; let it cool under vacuum before opening.' },
  { key: 'alkali', text: 'Alkali metals react violently with water and air: handle under oil or inert gas.' },
  { key: 'vacuum', text: 'Vacuum viewports can implode: shield them, never stress the flanges.' },
  { key: 'hv', text: 'Detectors run on high voltage: interlock and discharge before touching.' },
];

export function Caution({ species, extra }: { species?: string; extra: readonly string[] }) {
  return (
    <aside className="caution" aria-label="Safety cautions">
      <strong>Caution</strong>
      <ul>
        {CAUTIONS.map((c) => (
          <li key={c.key}>{c.text}</li>
        ))}
        <li className="caution-defer">Your lab&apos;s safety rules and licensed practice come first.</li>
      </ul>
      {species && extra.length > 0 && (
        <details className="caution-species">
          <summary>{species}: {extra.length} caution{extra.length === 1 ? '' : 's'} from the species library</summary>
          <ul>
            {extra.map((c, i) => (
              <li key={i}>{c}</li>
            ))}
          </ul>
        </details>
      )}
    </aside>
  );
}
