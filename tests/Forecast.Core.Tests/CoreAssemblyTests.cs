namespace Forecast.Core.Tests;

public class CoreAssemblyTests
{
    [Fact]
    public void CoreReferencesNeitherWebNorDatabaseLibraries()
    {
        // Layout rule of this project: the statistics know nothing of HTTP or SQL.
        var names = typeof(CatalogEvent).Assembly.GetReferencedAssemblies().Select(a => a.Name ?? "").ToList();
        Assert.DoesNotContain(names, n => n.StartsWith("Microsoft.AspNetCore", StringComparison.Ordinal)
            || n.StartsWith("Npgsql", StringComparison.Ordinal) || n == "Dapper"
            || n.StartsWith("Microsoft.Extensions", StringComparison.Ordinal));
    }
}
