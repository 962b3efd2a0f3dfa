namespace Decohere; public static class Placeholder {}
