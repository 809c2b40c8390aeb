/** The verdict forecast (issue #25 item 1): model, forecast, history, back-test. */
export * from './rules';
export * from './model';
export * from './closed-forms';
export * from './forecast';
export * from './history';
export * from './backtest';
export * from './generated-lots';
