/* eslint-disable no-undef */
// Two builds in one config:
// - "addin": the worksheet functions, the task pane and the ribbon commands, for the
//   browser runtime Office gives the add-in (one shared runtime, see manifest.xml);
//   functions.json is generated from the JSDoc in src/functions/functions.ts by
//   custom-functions-metadata-plugin, which also injects the CustomFunctions.associate calls.
// - "cli": the `skein` command line for Node (dist/cli/skein.js, package.json "bin").
const path = require("path");
const webpack = require("webpack");
const HtmlWebpackPlugin = require("html-webpack-plugin");
const CopyWebpackPlugin = require("copy-webpack-plugin");
const CustomFunctionsMetadataPlugin = require("custom-functions-metadata-plugin");

const devServerPort = require("./package.json").config.dev_server_port;

const tsRule = {
  test: /\.ts$/,
  exclude: /node_modules/,
  use: { loader: "ts-loader", options: { transpileOnly: true } },
};

async function httpsOptions() {
  // Office requires https even on localhost; the dev certificates are made on first use
  // by office-addin-dev-certs (installed with office-addin-debugging).
  try {
    const devCerts = require("office-addin-dev-certs");
    return await devCerts.getHttpsServerOptions();
  } catch (error) {
    console.warn(`Serving over http: no dev certificate (${error.message}). Excel needs https; run 'npx office-addin-dev-certs install'.`);
    return undefined;
  }
}

module.exports = async (env, options) => {
  const dev = options.mode === "development";
  const serving = Boolean(env && env.WEBPACK_SERVE);
  const addin = {
    name: "addin",
    devtool: "source-map",
    target: "web",
    entry: {
      functions: "./src/functions/functions.ts",
      taskpane: "./taskpane/taskpane.ts",
      commands: "./src/commands/commands.ts",
      help: "./taskpane/help.ts",
    },
    output: {
      path: path.resolve(__dirname, "dist"),
      filename: "[name].js",
      clean: { keep: /^cli\// },
    },
    resolve: { extensions: [".ts", ".js"], fallback: { fs: false, path: false, stream: false, crypto: false } },
    module: { rules: [tsRule, { test: /\.css$/, type: "asset/source" }] },
    performance: { hints: false },
    plugins: [
      new CustomFunctionsMetadataPlugin({ output: "functions.json", input: "./src/functions/functions.ts" }),
      // One page hosts the shared runtime: the task pane, the worksheet functions and the
      // ribbon commands (manifest.xml points Runtime, the functions Page, FunctionFile and
      // the pane at it), so this page is also the ribbon command page.
      new HtmlWebpackPlugin({
        filename: "taskpane.html",
        template: "./taskpane/taskpane.html",
        chunks: ["functions", "commands", "taskpane"],
      }),
      // The functions' help page: every @helpurl in src/functions/functions.ts points here.
      new HtmlWebpackPlugin({ filename: "help.html", template: "./taskpane/help.html", chunks: ["help"] }),
      new CopyWebpackPlugin({
        patterns: [
          { from: "assets/*", to: "assets/[name][ext]" },
          { from: "manifest.xml", to: "manifest.xml" },
          { from: "sample-workbooks/*.csv", to: "samples/[name][ext]", noErrorOnMissing: true },
        ],
      }),
    ],
    devServer: {
      static: { directory: path.resolve(__dirname, "dist") },
      headers: { "Access-Control-Allow-Origin": "*" },
      port: devServerPort,
      server: serving ? { type: "https", options: await httpsOptions() } : undefined,
    },
  };
  const cli = {
    name: "cli",
    target: "node20",
    devtool: dev ? "source-map" : false,
    // skein.js: the command, which starts skein-main.js (the program) through V8's code cache
    // (src/cli/compileCache.ts); skein-helper.js: the engine's helper thread
    // (src/cli/helperThread.ts), without the readers.
    entry: { skein: "./src/cli/launcher.ts", "skein-main": "./src/cli/skein.ts", "skein-helper": "./src/cli/helperEntry.ts" },
    output: { path: path.resolve(__dirname, "dist/cli"), filename: "[name].js", clean: true },
    resolve: { extensions: [".ts", ".js"] },
    // createRequire: false leaves node:module's createRequire to Node (the launcher hands the
    // program bundle a require of its own, compileCache.ts).
    module: { rules: [tsRule], parser: { javascript: { createRequire: false } } },
    // Runtime packages stay in node_modules; the bundle holds only our own code.
    externals: [({ request }, callback) => (/^[a-z@][^:]*$/i.test(request) && !request.startsWith(".") ? callback(null, `commonjs ${request}`) : callback())],
    externalsPresets: { node: true },
    optimization: { minimize: false },
    plugins: [new webpack.BannerPlugin({ banner: "#!/usr/bin/env node", raw: true, entryOnly: true })],
    performance: { hints: false },
  };
  return serving ? addin : [addin, cli];
};
