// Test-only extension (the E2E notes, §8: debugging from an extension): code-server has no Python debugger and cannot
// reach a marketplace, so the extension-host tests debug Python through this debug type, which
// runs Debian's debugpy adapter (python3-debugpy). It is loaded next to Hopscope as a second
// extensionDevelopmentPath and is never part of the shipped extension.
const vscode = require('vscode');

exports.activate = (context) => {
  const python = process.env.HOPSCOPE_TEST_PYTHON || '/usr/bin/python3';
  context.subscriptions.push(vscode.debug.registerDebugAdapterDescriptorFactory('hopscope-debugpy', {
    createDebugAdapterDescriptor: () => new vscode.DebugAdapterExecutable(python, ['-m', 'debugpy.adapter']),
  }));
};

exports.deactivate = () => {};
