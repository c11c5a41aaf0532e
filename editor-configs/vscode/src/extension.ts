// markwell for VS Code: starts `markwell serve` for files named *.chart.json (the language
// `chartspec` this extension contributes, chosen by the file name) and hands the editor's
// settings under `markwell` to the server.
import * as vscode from "vscode";
import {
  LanguageClient,
  LanguageClientOptions,
  ServerOptions,
  TransportKind,
} from "vscode-languageclient/node";

let client: LanguageClient | undefined;

function newClient(): LanguageClient {
  const command = vscode.workspace.getConfiguration("markwell").get<string>("server.path") || "markwell";
  const serverOptions: ServerOptions = {
    run: { command, args: ["serve"], transport: TransportKind.stdio },
    debug: { command, args: ["serve"], transport: TransportKind.stdio },
  };
  const clientOptions: LanguageClientOptions = {
    documentSelector: [
      { scheme: "file", language: "chartspec" },
      { scheme: "file", pattern: "**/*.chart.json" },
      { scheme: "untitled", language: "chartspec" },
    ],
    synchronize: { configurationSection: "markwell" },
  };
  return new LanguageClient("markwell", "markwell", serverOptions, clientOptions);
}

async function start(): Promise<void> {
  client = newClient();
  try {
    await client.start();
  } catch (error) {
    void vscode.window.showErrorMessage(
      `markwell: could not start the language server (${String(error)}). ` +
        "Set `markwell.server.path` to the markwell binary.",
    );
  }
}

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  context.subscriptions.push(
    vscode.workspace.onDidChangeConfiguration(async (event) => {
      if (event.affectsConfiguration("markwell.server.path")) {
        if (client) {
          await client.stop();
        }
        await start();
      }
    }),
  );
  await start();
}

export async function deactivate(): Promise<void> {
  if (client) {
    await client.stop();
  }
}
