import { useEffect, useState } from "react";
import { Form, NavLink } from "react-router";
import { type InsightsFilter, OUTCOME_LABELS, OUTCOMES } from "~/lib/insights-filters";

type Choices = {
  boards: Array<{ id: string; label: string }>;
  versions: Array<{ id: string; number: number; boardId: string; mapName: string }>;
  techs: Array<{ id: string; name: string }>;
};

/**
 * The GET filter form every insights page shares; bad values come back as messages beside their field. The map
 * version is picked per board (grouped by board, and narrowed to the chosen board once the script runs); a page
 * that draws one version (`thisVersion`) offers "only this version" instead.
 */
export function InsightsFilterForm({
  filter,
  errors,
  choices,
  thisVersion,
}: {
  filter: InsightsFilter;
  errors: Record<string, string>;
  choices: Choices;
  thisVersion?: { id: string; number: number };
}) {
  const [boardId, setBoardId] = useState(filter.boardId ?? "");
  const [versionId, setVersionId] = useState(filter.versionId ?? "");
  // A new filter arriving (a submit, back or forward) is what the fields show again.
  useEffect(() => {
    setBoardId(filter.boardId ?? "");
    setVersionId(filter.versionId ?? "");
  }, [filter.boardId, filter.versionId]);
  const versionBoards = choices.boards
    .map((b) => ({ ...b, versions: choices.versions.filter((v) => v.boardId === b.id) }))
    .filter((b) => b.versions.length && (!boardId || b.id === boardId));
  const err = (name: string) =>
    errors[name] ? (
      <p id={`f-${name}-error`} className="text-xs text-bad">
        {errors[name]}
      </p>
    ) : null;
  const aria = (name: string) =>
    errors[name] ? { "aria-invalid": true as const, "aria-describedby": `f-${name}-error` } : {};
  return (
    <Form method="get" className="card mb-6 flex flex-wrap items-end gap-4" aria-label="Filters">
      <div className="flex flex-col gap-1">
        <label htmlFor="f-from" className="text-sm font-medium">
          From
        </label>
        <input
          id="f-from"
          name="from"
          type="date"
          defaultValue={filter.from}
          className="field-input"
          {...aria("from")}
        />
        {err("from")}
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="f-to" className="text-sm font-medium">
          To
        </label>
        <input
          id="f-to"
          name="to"
          type="date"
          defaultValue={filter.to}
          className="field-input"
          {...aria("to")}
        />
        {err("to")}
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="f-board" className="text-sm font-medium">
          Board
        </label>
        <select
          id="f-board"
          name="board"
          value={boardId}
          onChange={(e) => {
            const next = e.currentTarget.value;
            setBoardId(next);
            // A version of another board would filter to nothing: let it go with the board.
            if (next && choices.versions.find((v) => v.id === versionId)?.boardId !== next) setVersionId("");
          }}
          className="field-input"
          {...aria("board")}
        >
          <option value="">All boards</option>
          {choices.boards.map((b) => (
            <option key={b.id} value={b.id}>
              {b.label}
            </option>
          ))}
        </select>
        {err("board")}
      </div>
      {thisVersion ? (
        <div className="flex flex-col gap-1">
          <span className="text-sm font-medium">Map version</span>
          <label className="flex min-h-10 items-center gap-2 text-sm">
            <input
              type="checkbox"
              name="version"
              value={thisVersion.id}
              defaultChecked={filter.versionId === thisVersion.id}
              className="h-4 w-4"
            />
            Only runs on version {thisVersion.number}
          </label>
          {err("version")}
        </div>
      ) : (
        <div className="flex flex-col gap-1">
          <label htmlFor="f-version" className="text-sm font-medium">
            Map version
          </label>
          <select
            id="f-version"
            name="version"
            value={versionId}
            onChange={(e) => setVersionId(e.currentTarget.value)}
            className="field-input"
            {...aria("version")}
          >
            <option value="">All versions</option>
            {versionBoards.map((b) => (
              <optgroup key={b.id} label={b.label}>
                {b.versions.map((v) => (
                  <option key={v.id} value={v.id}>
                    {v.mapName} · version {v.number}
                  </option>
                ))}
              </optgroup>
            ))}
          </select>
          {err("version")}
        </div>
      )}
      <div className="flex flex-col gap-1">
        <label htmlFor="f-tech" className="text-sm font-medium">
          Technician
        </label>
        <select
          id="f-tech"
          name="tech"
          defaultValue={filter.techId ?? ""}
          className="field-input"
          {...aria("tech")}
        >
          <option value="">Everyone</option>
          {choices.techs.map((t) => (
            <option key={t.id} value={t.id}>
              {t.name}
            </option>
          ))}
        </select>
        {err("tech")}
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="f-outcome" className="text-sm font-medium">
          Outcome
        </label>
        <select
          id="f-outcome"
          name="outcome"
          defaultValue={filter.outcome ?? ""}
          className="field-input"
          {...aria("outcome")}
        >
          <option value="">Any outcome</option>
          {OUTCOMES.map((o) => (
            <option key={o} value={o}>
              {OUTCOME_LABELS[o]}
            </option>
          ))}
        </select>
        {err("outcome")}
      </div>
      <button type="submit" className="btn btn-primary">
        Apply filters
      </button>
      {errors.form ? <p className="w-full text-sm text-bad">{errors.form}</p> : null}
    </Form>
  );
}

/** Tabs between the insights pages, keeping the current filters. */
export function InsightsTabs({ query }: { query: string }) {
  const tabs = [
    { to: "/insights", label: "Hot spots", end: true },
    { to: "/insights/runs", label: "Runs" },
    { to: "/insights/parts", label: "Parts to stock" },
  ];
  return (
    <nav aria-label="Insights" className="mb-4 flex flex-wrap gap-1 border-b border-line">
      {tabs.map((t) => (
        <NavLink
          key={t.to}
          to={`${t.to}?${query}`}
          end={t.end}
          className={({ isActive }) =>
            `-mb-px border-b-2 px-3 py-2 text-sm font-medium ${isActive ? "border-accent text-accent" : "border-transparent text-ink hover:bg-sunken"}`
          }
        >
          {t.label}
        </NavLink>
      ))}
    </nav>
  );
}

/** A link that downloads one table as CSV with the page's filters. */
export function CsvLink({
  table,
  query,
  label = "Export CSV",
}: {
  table: string;
  query: string;
  label?: string;
}) {
  return (
    <a className="btn px-3 py-1" href={`/insights/export/${table}.csv?${query}`} download>
      {label}
    </a>
  );
}
