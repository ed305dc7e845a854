export * from "./auth";
export * from "./plant";
export * from "./readings";
export * from "./strength";
export * from "./alerts";
export * from "./audit";
