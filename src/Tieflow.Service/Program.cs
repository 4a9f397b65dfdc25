namespace Tieflow.Service;

public static class Program
{
    public static int Main(string[] args) => args.Length >= 0 ? 0 : 1;
}
