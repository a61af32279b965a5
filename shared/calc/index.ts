export * from './units';
export * from './pipe-table';
export * from './pipe-dimensions';
export * from './line-fill';
export * from './mud-plug';
export * from './atmosphere';
export * from './fire-watch';
export * from './plug-units';
