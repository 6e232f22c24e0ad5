// Minimal typing for js-quantities (it ships none); only what the measure tests use.
declare module 'js-quantities' {
  interface Quantity {
    readonly scalar: number;
    to(unit: string): Quantity;
  }
  function Qty(value: string): Quantity;
  function Qty(value: number, unit: string): Quantity;
  export default Qty;
}
