/** A column of a TableHead: its words, any classes beyond the padding, and whether to show them. */
export interface Column {
  label: string;
  /** Added to the cell's padding, e.g. "text-right" over a column of figures. */
  className?: string;
  /** Read out but not shown (a column of buttons: "Actions"). */
  srOnly?: boolean;
}

/**
 * A table's head: one row of column headers (scope="col") over the muted rule the lists
 * share. `cell` is each header's padding, matching the body's cells; a column given as
 * false is left out (a column shown only to some).
 */
export default function TableHead({
  columns,
  cell = "p-3",
}: {
  columns: readonly (string | Column | false)[];
  cell?: string;
}) {
  return (
    <thead className="border-b border-line text-muted">
      <tr>
        {columns.map((c) => {
          if (c === false) return null;
          const col = typeof c === "string" ? { label: c } : c;
          return (
            <th
              key={col.label}
              scope="col"
              className={col.className ? `${cell} ${col.className}` : cell}
            >
              {col.srOnly ? <span className="sr-only">{col.label}</span> : col.label}
            </th>
          );
        })}
      </tr>
    </thead>
  );
}
