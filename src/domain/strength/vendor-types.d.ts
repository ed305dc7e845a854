// Types for the untyped `regression` 2.0.1 package, used only by tests as a reference library
// (domain.md §9). Only the calls the tests make are declared.
declare module "regression" {
  interface RegressionResult {
    equation: number[];
    r2: number;
    predict(x: number): [number, number];
  }
  interface RegressionOptions {
    precision?: number;
  }
  const regression: {
    linear(data: [number, number][], options?: RegressionOptions): RegressionResult;
    logarithmic(data: [number, number][], options?: RegressionOptions): RegressionResult;
  };
  export default regression;
}
