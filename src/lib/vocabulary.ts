/** The fixed word lists of Plinth's data, shared by the database schema, the API and the pages. */
export const areaKindValues = ["cure_room", "yard", "bin_area", "lab", "other"] as const;
export const sensorKindValues = ["bag", "embedded", "bin", "ambient"] as const;
/** "new": seen but not yet named and placed; "active": in service; "retired": out of service. */
export const sensorStatusValues = ["new", "active", "retired"] as const;
