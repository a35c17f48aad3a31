// Li-ion charge limit per cell (Linden's Handbook of Batteries): 4.20 V for common cells, configurable
// because 4.35 V high-voltage cells and 3.65 V LiFePO4 cells exist.
export const LI_ION_FULL_V_PER_CELL = 4.2;

export function fullChargeVolts(cellsInSeries: number, voltsPerCell = LI_ION_FULL_V_PER_CELL) {
  if (!Number.isInteger(cellsInSeries) || cellsInSeries < 0) return null;
  return Math.round(cellsInSeries * voltsPerCell * 1000) / 1000;
}
