using System.Reflection;
using Tieflow.Service.Hosting;
using Tieflow.Service.Settings;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>The one list of settings keys: environment names, and that every option the sources and the store bind has its key.</summary>
public sealed class SettingsKeysTests
{
    [Theory]
    [InlineData("Tieflow:Plant", "TIEFLOW__Plant")]
    [InlineData("Tieflow:Source:Endpoint", "TIEFLOW__Source__Endpoint")]
    [InlineData("Tieflow:Store:OutboxMaxBytes", "TIEFLOW__Store__OutboxMaxBytes")]
    public void EnvironmentVariable_Key_IsTheHostsDoubleUnderscoreForm(string key, string variable)
    {
        Assert.Equal(variable, SettingsKeys.EnvironmentVariable(key));
        Assert.Equal(key, SettingsKeys.FromEnvironmentVariable(variable));
        Assert.Equal(key, SettingsKeys.FromEnvironmentVariable(variable.ToUpperInvariant()));
    }

    [Theory]
    [InlineData("TIEFLOW__Source__Endpont")]
    [InlineData("TIEFLOW__Store")]
    [InlineData("TIEFLOW_INFLUX_TOKEN")]
    public void FromEnvironmentVariable_UnknownOrSection_IsNull(string variable) =>
        Assert.Null(SettingsKeys.FromEnvironmentVariable(variable));

    [Fact]
    public void All_EveryKey_IsUniqueAndInTheTieflowSection()
    {
        Assert.Equal(SettingsKeys.All.Count, SettingsKeys.All.Distinct(StringComparer.OrdinalIgnoreCase).Count());
        Assert.All(SettingsKeys.All, k => Assert.StartsWith(SettingsKeys.Section + ":", k, StringComparison.Ordinal));
    }

    [Theory]
    [InlineData(typeof(OpcUaSourceOptions), SettingsKeys.Source)]
    [InlineData(typeof(LabFolderOptions), SettingsKeys.Labs)]
    [InlineData(typeof(StoreOptions), SettingsKeys.Store)]
    public void Options_EveryBoundProperty_HasItsKey(Type options, string section)
    {
        foreach (PropertyInfo p in options.GetProperties(BindingFlags.Public | BindingFlags.Instance).Where(p => p.CanWrite))
        {
            Assert.Contains($"{section}:{p.Name}", SettingsKeys.All);
        }
    }
}
