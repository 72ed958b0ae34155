return TapeVault.Cli.Entry.Run(args, Console.Out, Console.Error);
