// Style sheets are imported for their side effect; vite bundles them into the page.
declare module '*.css';
