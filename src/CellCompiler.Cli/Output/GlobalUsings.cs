// The one atomic file writer and its exception live in the library (CellCompiler.Io); every command uses them.
global using CellCompiler.Io;
