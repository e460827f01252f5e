// Shared by Metro (web bundle) and jest (every test project).
module.exports = function (api) {
  api.cache(true);
  return { presets: ['babel-preset-expo'] };
};
