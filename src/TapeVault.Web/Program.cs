using TapeVault.Web;

var app = WebApp.Build(args);
await app.RunAsync();

/// <summary>The entry point's type, named so that tests can start the app with WebApplicationFactory.</summary>
public partial class Program;
