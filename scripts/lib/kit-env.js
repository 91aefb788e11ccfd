// `$env/dynamic/private` for scripts that run the app's server modules outside Vite (see kit-aliases.js).
export const env = process.env;
