/*
 * The functions bundle shares its page with the task pane. Outside Excel (the pane's
 * plain-browser mode, or office.js failing to load) there is no CustomFunctions global,
 * and the CustomFunctions.associate calls the metadata plugin appends to functions.ts
 * would throw. Imported first by functions.ts, this gives them a no-op target there;
 * inside Excel the real global exists and nothing changes.
 */
const scope = globalThis as { CustomFunctions?: { associate?: unknown } };
if (typeof scope.CustomFunctions === "undefined") {
  scope.CustomFunctions = { associate: () => undefined };
}

export {};
