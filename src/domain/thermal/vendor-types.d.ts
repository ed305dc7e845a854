// Types for the untyped `psychrolib` 1.1.1 package, used only by tests as a reference library
// (domain.md §9). Only the calls the tests make are declared.
declare module "psychrolib" {
  const psychrolib: {
    SI: number;
    SetUnitSystem(unitSystem: number): void;
    GetTDewPointFromRelHum(tDryBulbC: number, relHum: number): number;
    GetHumRatioFromRelHum(tDryBulbC: number, relHum: number, pressurePa: number): number;
  };
  export default psychrolib;
}
