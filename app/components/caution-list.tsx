import { type Caution, LOCAL_CODES_LINE } from "~/lib/walker";

/** The cautions for some work, each with its title, then the line deferring to local codes and practice. */
export function CautionList({ cautions, small = false }: { cautions: Caution[]; small?: boolean }) {
  return (
    <>
      <ul className={`mt-1 flex flex-col gap-1 ${small ? "" : "text-sm"}`}>
        {cautions.map((c) => (
          <li key={c.id}>
            <span className="font-medium">{c.title}: </span>
            {c.text}
          </li>
        ))}
      </ul>
      <p className={`mt-2 ${small ? "text-xs" : "text-sm"}`}>{LOCAL_CODES_LINE}</p>
    </>
  );
}
