// Stands in for the VS Code API in every room but the host: their tsconfig maps "vscode" to this
// file, so an import of it fails to compile ("is not a module"). Only the host uses the API.
