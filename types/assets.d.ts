// Side-effect CSS imports in the dashboard bundle (TypeScript 6+ needs this declared).
declare module '*.css';
