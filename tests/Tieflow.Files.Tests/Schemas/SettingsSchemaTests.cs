namespace Tieflow.Files.Tests.Schemas;

/// <summary>
/// The settings schema: strict inside the <c>Tieflow</c> section, open outside it. The settings validators live in the
/// service (tests/Tieflow.Service.Tests/Hosting/SettingsValidationTests.cs); here only the schema is checked.
/// </summary>
public sealed class SettingsSchemaTests
{
    [Theory]
    [InlineData("""{ "$schema": "schemas/settings.schema.json" }""")]
    [InlineData("""
        { "Tieflow": { "Plant": "plant/site.plant.json",
            "Source": { "Kind": "opcua", "Endpoint": "opc.tcp://plant-server:4840", "User": "tieflow", "Security": "SignAndEncrypt:Aes256_Sha256_RsaPss", "Pki": "/var/lib/tieflow/pki" },
            "Labs": { "Folder": "/srv/lab-drop" },
            "Store": { "Kind": "influxdb", "Url": "http://influx:8086", "Org": "site", "Bucket": "tieflow", "OutboxPath": "outbox.db", "OutboxMaxBytes": 104857600, "Gzip": false, "WriteSignals": true } } }
        """)]
    [InlineData("""{ "Tieflow": { "Source": { "Kind": "simulator", "Scenario": "clean.scenario.json", "Speed": 60 }, "Store": { "Kind": "sqlite", "Path": "tieflow-data/tieflow.db" } } }""")]
    [InlineData("""{ "Tieflow": { "Units": ["X300"], "Health": { "Enabled": false, "Port": 0 } } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Security": "None" } }, "Logging": { "LogLevel": { "Default": "Information", "Microsoft.Hosting": "Warning" }, "Console": { "FormatterName": "simple" } }, "AllowedHosts": "*", "Anything": { "else": [1, 2] } }""")]
    public void Accepted(string json)
    {
        Assert.Empty(SchemaSet.Validate("settings", json));
    }

    [Theory]
    [InlineData("""{ "Tieflow": { "Plnat": "x.plant.json" } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Kind": "modbus" } } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Endpoint": "http://plant-server:4840" } } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Security": "Encrypt" } } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Security": "Sign:Basic128Rsa15" } } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Speed": 0 } } }""")]
    [InlineData("""{ "Tieflow": { "Source": { "Password": "secret" } } }""")]
    [InlineData("""{ "Tieflow": { "Labs": { "Folder": "" } } }""")]
    [InlineData("""{ "Tieflow": { "Store": { "Kind": "postgres" } } }""")]
    [InlineData("""{ "Tieflow": { "Store": { "OutboxMaxBytes": 0 } } }""")]
    [InlineData("""{ "Tieflow": { "Store": { "WriteSignals": "yes" } } }""")]
    [InlineData("""{ "Tieflow": { "Store": { "Gzip": "no" } } }""")]
    [InlineData("""{ "Tieflow": { "Store": { "Token": "abc" } } }""")]
    [InlineData("""{ "Tieflow": "plant.json" }""")]
    [InlineData("""{ "Tieflow": { "Units": "X300" } }""")]
    [InlineData("""{ "Tieflow": { "Units": ["X300", "X300"] } }""")]
    [InlineData("""{ "Tieflow": { "Health": { "Port": 70000 } } }""")]
    [InlineData("""{ "Tieflow": { "Health": { "Address": "0.0.0.0" } } }""")]
    [InlineData("""{ "Tieflow": { "Store": { "OutboxMaxBytes": 1000 } } }""")]
    [InlineData("""{ "Logging": { "LogLevel": { "Default": "Verbose" } } }""")]
    public void Refused(string json)
    {
        Assert.NotEmpty(SchemaSet.Validate("settings", json));
    }
}
