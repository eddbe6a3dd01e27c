/** The physics layer: rates, Strickler–Berg, conversions, quantum yield and efficiency. */
export * from './constants.js';
export * from './conversions.js';
export * from './rates.js';
export * from './stricklerBerg.js';
export * from './quantumYield.js';
export * from './standards.js';
export * from './efficiency.js';
